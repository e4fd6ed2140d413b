! Written by hand for the matchbench touchstone tests.
! Exercises TS-18: a v2 2-port without [Two-Port Data Order] must be refused.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Number of Frequencies] 1
[Network Data]
1 0.1 0 0.5 0 0.7 0 0.2 0
[End]
