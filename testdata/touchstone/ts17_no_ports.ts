! Written by hand for the matchbench touchstone tests.
! Exercises TS-17: a v2 file without [Number of Ports] must be refused.
[Version] 2.0
# GHz S RI R 50
[Number of Frequencies] 1
[Network Data]
1 0.5 0
[End]
