"""Text below the models: tokens, the one fold, dictionary matching, features, clusters, spans."""
