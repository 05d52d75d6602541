"""Perch engine: the physics and data chain for siting small wind turbines on and between buildings.

The engine never imports the dashboard framework; the dashboard, the command line and the
siting summary all call the same functions here.
"""
from engine.core import __version__
