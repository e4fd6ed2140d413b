! Written by hand for the matchbench touchstone tests.
! Exercises TS-18: order 21_12 means N11 N21 N12 N22 (same numbers as ts18_12_21.ts).
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] 1
[Network Data]
1 0.1 0 0.5 0 0.7 0 0.2 0
[End]
