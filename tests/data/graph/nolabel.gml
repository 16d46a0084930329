# Hand-made: no labels; two nodes share a name, so ids name the nodes.
graph [
  node [ id 7 name "x" ]
  node [ id 8 name "x" ]
  node [ id 9 ]
  edge [ source 7 target 8 ]
  edge [ source 8 target 9 ]
]
