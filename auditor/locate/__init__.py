"""Locating regressions: one recogniser per form, grouping, the roles of statistic cells."""
