"""What a turbine makes of the effective climate: power curves and the turbine library, annual
energy, its uncertainty, rotor loads, noise at neighbours and the economics.

Above :mod:`engine.flow` (it reads the effective climate's arrays) and below
:mod:`engine.chain` (which assembles these into the ranked table).
"""
from engine.energy import aep, economics, loads, noise, selfuse, turbines, uncertainty

__all__ = ["aep", "economics", "loads", "noise", "selfuse", "turbines", "uncertainty"]
