[Version] 2.0
# MHz S RI R 50
[Number of Ports] 1
[Number of Frequencies] 1
[Colour] blue
[Network Data]
1 0.1 0.2
