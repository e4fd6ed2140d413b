! Written by hand for the matchbench touchstone tests.
! Exercises TS-21: per-port R on the option line is v2.1 only; refused in a 2.0 file.
[Version] 2.0
# GHz S RI R 50 75
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Network Data]
1 0.1 0 0.2 0 0.3 0 0.4 0
[End]
