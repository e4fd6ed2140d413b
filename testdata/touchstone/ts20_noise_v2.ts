! Written by hand for the matchbench touchstone tests.
! Exercises TS-20/TS-15: v2 noise data after [Noise Data], Rn in ohms (see the reader's note).
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] 2
[Number of Noise Frequencies] 2
[Network Data]
1 0.5 0 0.5 0 0.5 0 0.5 0
2 0.5 0 0.5 0 0.5 0 0.5 0
[Noise Data]
0.5 0.8 0.4 30 12.5
3 1.1 0.35 50 15
[End]
