"""Trapbook: a lab notebook for trapping experiments of strained, short-lived intermediates."""

__version__ = "0.1.0"
