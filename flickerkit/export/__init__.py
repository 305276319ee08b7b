"""Exports: JSON, terminal tables, Excel workbooks (and, later, C headers).

Exports only format results computed elsewhere; they never compute metrics.
"""
