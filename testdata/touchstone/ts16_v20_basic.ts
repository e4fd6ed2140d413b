! Written by hand for the matchbench touchstone tests.
! Exercises TS-16/TS-17: a minimal v2.0 1-port read by its keywords (the .ts name gives no port count).
[Version] 2.0
# MHz S MA R 50
[Number of Ports] 1
[Number of Frequencies] 2
[Network Data]
100 0.5 0
200 0.5 90
[End]
