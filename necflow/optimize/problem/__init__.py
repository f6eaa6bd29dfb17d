"""The problem a study solves: its search space, its cost and robust scoring."""
