! Written by hand for the matchbench touchstone tests.
! Exercises TS-22: 3-port [Matrix Format] Upper, 6 pairs per point mirrored to a symmetric matrix.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 3
[Number of Frequencies] 1
[Matrix Format] upper
[Network Data]
1 11 1 12 1 13 1
  22 1 23 1
  33 1
[End]
