[Version] 2.0
[Number of Ports] 1
[Number of Frequencies] 5
[Network Data]
140 0.10 -0.20
142 0.05 -0.10
144 0.00 0.00
146 -0.05 0.10
148 -0.10 0.20
[End]
