! Written by hand for the matchbench touchstone tests.
! Exercises TS-19: [Number of Frequencies] 3 but only 2 points; refused at [End].
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 1
[Number of Frequencies] 3
[Network Data]
1 0.5 0
2 0.5 0
[End]
