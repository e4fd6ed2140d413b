! Written by hand for the matchbench touchstone tests.
! Exercises TS-22: 3-port [Matrix Format] Lower, 6 pairs per point mirrored to a symmetric matrix.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 3
[Number of Frequencies] 1
[Matrix Format] Lower
[Network Data]
1 11 1
  21 1 22 1
  31 1 32 1 33 1
[End]
