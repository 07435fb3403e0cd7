"""Shakestill: plan and check rigs with a pendulum on a vertically driven pivot."""

__version__ = "0.1.0"
