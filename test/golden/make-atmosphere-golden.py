#!/usr/bin/env python3
"""Writes atmosphere-fluids.json: the U.S. Standard Atmosphere 1976 as computed by the `fluids` library.

Reference values for test/core/atmosphere-golden.test.ts, from a general-purpose library outside this project.
npm test reads the JSON only; run this script again (with the pinned version) to regenerate it:

    python3 -m venv venv && venv/bin/pip install fluids==1.3.1
    venv/bin/python test/golden/make-atmosphere-golden.py > test/golden/atmosphere-fluids.json

fluids.atmosphere.ATMOSPHERE_1976(Z, dT) takes a GEOMETRIC altitude Z; the tool works in geopotential (pressure)
altitude H, so each point is converted with Z = r0*H/(r0 - H), r0 = 6 356 766 m (the USSA 1976 Earth radius).
dT shifts the temperature (and so density and speed of sound) at the standard pressure, as an ISA deviation does.
"""
import json
import sys

import fluids
from fluids.atmosphere import ATMOSPHERE_1976

R0_M = 6_356_766.0
DEVIATIONS_K = [-30.0, -15.0, 0.0, 15.0, 30.0]


def geopotential_altitudes():
    """78 evenly spaced from -500 to 20 000 m, plus sea level and the tropopause exactly: 80 altitudes."""
    count = 78
    hs = [-500.0 + (20_500.0 * i) / (count - 1) for i in range(count)]
    hs += [0.0, 11_000.0]
    return sorted(set(round(h, 6) for h in hs))


def main():
    points = []
    for h in geopotential_altitudes():
        z = R0_M * h / (R0_M - h)
        for dt in DEVIATIONS_K:
            atm = ATMOSPHERE_1976(z, dt)
            points.append([h, dt, atm.T, atm.P, atm.rho, atm.v_sonic])
    doc = {
        "source": "fluids.atmosphere.ATMOSPHERE_1976 (U.S. Standard Atmosphere 1976)",
        "library": "fluids",
        "library_version": fluids.__version__,
        "generator": "test/golden/make-atmosphere-golden.py",
        "altitude": "geopotential (pressure) altitude H, m; fluids was given Z = r0*H/(r0 - H), r0 = 6356766 m",
        "columns": ["h_m", "isa_deviation_k", "temperature_k", "pressure_pa", "density_kg_m3", "speed_of_sound_mps"],
        "points": points,
    }
    # One point per line keeps diffs readable; repr() round-trips every float exactly.
    head = json.dumps({k: v for k, v in doc.items() if k != "points"}, indent=2)[:-2]
    rows = ",\n".join("    [" + ", ".join(repr(x) for x in p) + "]" for p in points)
    sys.stdout.write(head + ',\n  "points": [\n' + rows + "\n  ]\n}\n")


if __name__ == "__main__":
    main()
