! Written by hand for the matchbench touchstone tests.
! Exercises TS-16: a v2 keyword before [Version] must be refused.
[Number of Ports] 1
[Version] 2.0
# GHz S RI R 50
[Number of Frequencies] 1
[Network Data]
1 0.5 0
[End]
