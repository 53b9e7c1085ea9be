"""Analyses: rating data (and optionally a plan) in, frozen result objects with ``to_json()`` out."""
