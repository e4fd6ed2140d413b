! Written by hand for the matchbench touchstone tests.
! Exercises TS-19: [Number of Frequencies] 1 but a second point on line 10.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 1
[Number of Frequencies] 1
[Network Data]
1 0.5 0
2 0.5 0
[End]
