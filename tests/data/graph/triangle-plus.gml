# Hand-made: a triangle ann-bob-cy, a pendant dee on cy, and eve with no
# edge (kept as an isolated node). One edge is listed twice, reversed.
graph [
  directed 0
  node [ id 10 label "ann" ]
  node [ id 20 label "bob" ]
  node [ id 30 label "cy" ]
  node [ id 40 label "dee" ]
  node [ id 50 label "eve" ]
  edge [ source 10 target 20 ]
  edge [ source 20 target 30 ]
  edge [ source 30 target 10 ]
  edge [ source 30 target 40 ]
  edge [ source 20 target 10 ]
]
