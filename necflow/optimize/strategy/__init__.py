"""How a study searches: the optuna trial loop (study), the screening of
nested trials from few solves (screen) and the vectorised inner feed search
(inner)."""
