# Hand-made: a directed 3-cycle a->b->c->a plus b->a (the same undirected
# edge as a->b) and a self-loop on c. Undirected: a triangle.
graph [
  directed 1
  node [ id 1 label "a" ]
  node [ id 2 label "b" ]
  node [ id 3 label "c" ]
  edge [ source 1 target 2 ]
  edge [ source 2 target 3 ]
  edge [ source 3 target 1 ]
  edge [ source 2 target 1 ]
  edge [ source 3 target 3 ]
]
