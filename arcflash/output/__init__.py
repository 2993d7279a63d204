"""Outputs for people: text tables, reports, labels. Built on the models."""
