"""Widgets particular to trapping runs: the addition track, the checks list, the strain
card, the yield grid and the labelled form field."""
