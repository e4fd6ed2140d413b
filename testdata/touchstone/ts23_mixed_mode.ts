! Written by hand for the matchbench touchstone tests.
! Exercises TS-23: [Mixed-Mode Order] refused as unsupported.
[Version] 2.0
# GHz S RI R 50
[Number of Ports] 4
[Number of Frequencies] 1
[Mixed-Mode Order] D1,2 D3,4 C1,2 C3,4
[Network Data]
1 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0 0
[End]
