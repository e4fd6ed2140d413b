! Written by hand for the matchbench touchstone tests.
! Exercises TS-14: 100 ohm resistor as v2 Z data in ohms: 100.
[Version] 2.0
# GHz Z RI R 50
[Number of Ports] 1
[Number of Frequencies] 1
[Network Data]
1 100 0
[End]
