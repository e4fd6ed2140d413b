! Written by hand for the matchbench touchstone tests.
! Exercises TS-23: [Begin Information]/[End Information] skipped; keywords are case-insensitive.
[Version] 2.0
# GHz S RI R 50
[NUMBER OF PORTS] 1
[Begin Information]
[Manufacturer] anything at all here, 1 2 3
free text [ with brackets
[End Information]
[number of frequencies] 1
[Network Data]
1 0.5 0
[end]
