"""Where a study lives: journal file or PostgreSQL (backends), the study
lock, and the trial bookkeeping that keeps the budget exact."""
