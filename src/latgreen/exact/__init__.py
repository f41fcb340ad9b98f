"""Exact forms, the recurrences that produce them, and their rigorous evaluation."""
