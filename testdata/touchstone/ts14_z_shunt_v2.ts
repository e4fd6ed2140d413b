! Written by hand for the matchbench touchstone tests.
! Exercises TS-14 with REFERENCE-CHECKS 11: shunt 50 ohm resistor as v2 Z data in ohms, references 75 ohm.
[Version] 2.0
# GHz Z RI R 75
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Network Data]
1 50 0 50 0 50 0 50 0
[End]
