! Written by hand for the matchbench touchstone tests.
! Exercises TS-20: [Noise Data] without [Number of Noise Frequencies] must be refused.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] 1
[Network Data]
1 0.5 0 0.5 0 0.5 0 0.5 0
[Noise Data]
0.5 0.8 0.4 30 12.5
[End]
