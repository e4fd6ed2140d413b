! Written by hand for the matchbench touchstone tests.
! Exercises TS-21: [Reference] values on the lines after the keyword.
[Version] 2.0
# GHz S RI R 100
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Reference]
50
  75 ! port 2
[Network Data]
1 0.1 0 0.2 0 0.3 0 0.4 0
[End]
