"""Named cargo compositions of our own, for examples and the app's composition editor.

Invented, representative of their kind (common practice, no source): lean LNG
is nearly all methane; rich LNG carries more ethane and LPG components;
commercial propane is mostly propane with a little ethane and butanes; the
LPG blend is half propane, half n-butane. Liquid mole fractions as loaded.
"""

from __future__ import annotations

#: Preset name -> liquid mole fractions [-] (each sums to 1).
MIXTURE_PRESETS: dict[str, dict[str, float]] = {
    "lean LNG": {"methane": 0.975, "ethane": 0.019, "propane": 0.002, "nitrogen": 0.004},
    "typical LNG": {
        "methane": 0.915, "ethane": 0.055, "propane": 0.015, "n-butane": 0.004,
        "isobutane": 0.003, "n-pentane": 0.001, "nitrogen": 0.007,
    },
    "rich LNG": {
        "methane": 0.858, "ethane": 0.086, "propane": 0.036, "n-butane": 0.008,
        "isobutane": 0.007, "n-pentane": 0.001, "isopentane": 0.001, "nitrogen": 0.003,
    },
    "commercial propane": {
        "propane": 0.96, "ethane": 0.015, "isobutane": 0.015, "n-butane": 0.01,
    },
    "LPG 50/50 blend": {"propane": 0.5, "n-butane": 0.5},
}
