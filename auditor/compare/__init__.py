"""Agreement: the three values per statistic and the precision each is judged at."""
