! Written by hand for the matchbench touchstone tests.
! Exercises TS-21: [Reference] 50 75 overrides the option line's R 100.
[Version] 2.0
# GHz S RI R 100
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Reference] 50 75
[Network Data]
1 0.1 0 0.2 0 0.3 0 0.4 0
[End]
