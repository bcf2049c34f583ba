[Version] 2.0
# MHz S RI R 50
[Number of Ports] 2
[Number of Frequencies] 1
[Network Data]
1 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8
