"""How a study searches: the optuna trial loop (study), the split search and
the vectorised inner feed search."""
