"""Stage 3, reciprocal: extended graph, embeddings and force diagrams (2D and 3D), polyhedral force cells, Minkowski sums."""
