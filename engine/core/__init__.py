"""Core: the domain dataclasses, the one input-error type and display units.

The bottom of the chain. Every other package imports from here; nothing here imports from
another package of the engine.
"""
__version__ = "0.1.0"
