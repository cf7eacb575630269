"""Diagnosis: the rule expression language, rule loading, findings and fault ranking."""
