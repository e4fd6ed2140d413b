! Written by hand for the matchbench touchstone tests.
! Exercises TS-18: [Two-Port Data Order] in a 1-port file must be refused.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 1
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Network Data]
1 0.5 0
[End]
