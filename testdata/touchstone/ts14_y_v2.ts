! Written by hand for the matchbench touchstone tests.
! Exercises TS-14: 10 mS admittance as v2 Y data in siemens: 0.01.
[Version] 2.0
# GHz Y RI R 50
[Number of Ports] 1
[Number of Frequencies] 1
[Network Data]
1 0.01 0
[End]
