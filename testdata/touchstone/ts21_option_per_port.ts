! Written by hand for the matchbench touchstone tests.
! Exercises TS-21: v2.1 per-port R on the option line.
[Version] 2.1
# GHz S RI R 50 75
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Network Data]
1 0.1 0 0.2 0 0.3 0 0.4 0
[End]
