"""The safety cautions: one list for the dashboard, the summary and every other output.

Plain text, no markup: each item is (title, text); the title names the hazard and the text
says what to do and who decides (local codes, a structural engineer, licensed installers).
"""
from __future__ import annotations

#: (title, text) of every caution, in the order they are shown.
CAUTIONS = (
    ("Working at height", "Roof and mast work is dangerous. Only trained people with fall "
     "protection, a safe access plan and a second person present go on a roof or raise a "
     "mast, and never in high wind, rain or ice; follow the local rules for work at height."),
    ("Roof structure", "A turbine puts its weight, thrust, vibration and fatigue loads into "
     "the roof or wall. A structural engineer must check the building, its fixings and the "
     "mounting before anything is fixed to it, resonance with the rotor's speed included; "
     "this tool does not check structures."),
    ("Mast loads", "Masts, guys and foundations must be designed for the site's extreme wind "
     "and the rotor's thrust by a structural engineer, to local codes and the "
     "manufacturer's instructions."),
    ("Electrical work", "Connection to the building's wiring or the grid must be "
     "designed, installed and certified by a licensed installer, with the network "
     "operator's consent where the local rules ask for it."),
    ("Noise for neighbours", "Turbine noise and vibration carry, more so at night. The levels "
     "here are ISO 9613-2 estimates: check them against the local limits at the nearest "
     "windows and gardens, talk to neighbours, and have a qualified acoustician measure where "
     "a neighbour might be affected."),
    ("Shadow flicker", "A rotor turning between the sun and a window flickers. The hours here "
     "are estimates from the sun's path; the local authority sets the limits."),
    ("Planning permission", "Most places need planning or building consent for a turbine on "
     "or near a building. The rule checks say which chosen rules a position meets, never that "
     "it is permitted: ask the local planning authority before buying."),
    ("Local codes come first", "Where these figures and a local code, a structural engineer "
     "or a licensed installer disagree, follow the code, the engineer and the installer."),
    ("Yield estimates", "Building-mounted turbines in field trials produced far less than "
     "promised. The figures here are model estimates with the uncertainties stated; measure "
     "on site before investing where you can; what may be mounted where is for local codes, a "
     "structural engineer and licensed installers to decide."),
)

#: The one-line reminder shown above the first section of the summary.
CAUTIONS_SHORT = (
    "Roof and mast work, roof structure, mast loads and electrical connection need a "
    "structural engineer and licensed installers; check noise and shadow flicker for "
    "neighbours and planning permission; local codes come first (the cautions section lists "
    "every caution).",
)


def caution_lines() -> tuple:
    """Each caution as one line of text: ``"Title: text"``."""
    return tuple(f"{title}: {text}" for title, text in CAUTIONS)
