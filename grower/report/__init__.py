"""Rendering: rich tables, terminal charts, JSON and CSV. Never computes physics.

One module per command's report; shared helpers in `grower.report.common`.
"""
