! Written by hand for the matchbench touchstone tests.
! Exercises TS-23: a v2 file without [End] must be refused.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 1
[Number of Frequencies] 1
[Network Data]
1 0.5 0
