! Written by hand for the matchbench touchstone tests.
! Exercises TS-24: a v2 2-port point spread over 3 lines.
[Version] 2.1
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 2
[Network Data]
1 0.11 0
  0.12 0 0.21 0
  0.22 0
2 0.11 0 0.12 0 0.21 0 0.22 0
[End]
