"""Diagnosis: which named mistake reproduces a reported number."""
