"""Physical constants and unit conversions used by ``physics`` (SI throughout).

Every number the physics modules need lives here, once, with its source.

=========================  ===========  ===============  ==============================================
name                       symbol       unit             source
=========================  ===========  ===============  ==============================================
``G0``                     g0           m/s²             standard gravity; ICAO Doc 7488 / US Std Atm 1976
``R_AIR``                  R            J/(kg K)         specific gas constant of dry air; ICAO Doc 7488
``GAMMA_AIR``              γ            –                ratio of specific heats of air; ICAO Doc 7488
``T0_K``                   T0           K                sea-level ISA temperature; ICAO Doc 7488
``P0_PA``                  p0           Pa               sea-level ISA pressure; ICAO Doc 7488
``RHO0_KG_M3``             ρ0           kg/m³            sea-level ISA density; ICAO Doc 7488
``A0_MPS``                 a0           m/s              sea-level ISA speed of sound, sqrt(γ R T0)
``LAPSE_TROPOSPHERE``      L            K/m              troposphere lapse rate; ICAO Doc 7488
``EARTH_RADIUS_M``         r0           m                radius for geopotential; US Std Atm 1976
``ISA_LAYERS``             –            m, K/m           layer bases and lapse rates; US Std Atm 1976
``ZERO_CELSIUS_K``         –            K                0 °C; SI brochure (BIPM)
``FT_M``                   –            m                international foot (1959 agreement)
``KT_MPS``                 –            m/s              knot = 1852 m/h (international nautical mile)
``LB_KG``                  –            kg               international avoirdupois pound (1959)
``LBF_N``                  –            N                pound-force = LB_KG × G0
``SLUG_FT3_KG_M3``         –            kg/m³            slug/ft³ = (LBF_N/FT_M)/FT_M³
``HPA_PA``                 –            Pa               hectopascal
``SCREEN_HEIGHT_35FT_M``   –            m                35 ft screen, 14 CFR 25.113(a) (dry runway)
``SCREEN_HEIGHT_15FT_M``   –            m                15 ft screen, 14 CFR 25.113 (wet runway)
``SCREEN_HEIGHT_50FT_M``   –            m                50 ft screen, light aircraft (Raymer §17.8)
=========================  ===========  ===============  ==============================================

References
----------
.. [1] ICAO, *Manual of the ICAO Standard Atmosphere*, Doc 7488/3, 1993.
.. [2] NOAA/NASA/USAF, *U.S. Standard Atmosphere, 1976*, NOAA-S/T 76-1562.
.. [3] 14 CFR Part 25, §25.113 Takeoff distance and takeoff run.
.. [4] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8.
"""

from __future__ import annotations

import math

# --- Standard atmosphere [1], [2] -------------------------------------------------
G0 = 9.80665
R_AIR = 287.05287
GAMMA_AIR = 1.4
T0_K = 288.15
P0_PA = 101_325.0
RHO0_KG_M3 = P0_PA / (R_AIR * T0_K)  # 1.2250 kg/m³ as tabulated; exact ratio keeps inverses exact
A0_MPS = math.sqrt(GAMMA_AIR * R_AIR * T0_K)
LAPSE_TROPOSPHERE = 0.0065
EARTH_RADIUS_M = 6_356_766.0

#: Layers of the standard atmosphere up to 32 km geopotential:
#: (base geopotential altitude [m], lapse rate dT/dH [K/m]) — [2], Table 4.
ISA_LAYERS = ((0.0, -0.0065), (11_000.0, 0.0), (20_000.0, 0.001), (32_000.0, None))

#: Lowest and highest geopotential altitude the atmosphere functions accept. [m]
ISA_MIN_ALTITUDE_M = -5_000.0
ISA_MAX_ALTITUDE_M = 32_000.0

#: Troposphere pressure exponent g0 / (R L) = 5.25588 [1].
PRESSURE_EXPONENT = G0 / (R_AIR * LAPSE_TROPOSPHERE)

# --- Unit conversions (exact by definition unless stated) ---------------------------
ZERO_CELSIUS_K = 273.15
FT_M = 0.3048
KT_MPS = 1852.0 / 3600.0
LB_KG = 0.45359237
LBF_N = LB_KG * G0
SLUG_KG = LBF_N / FT_M
SLUG_FT3_KG_M3 = SLUG_KG / FT_M**3
HPA_PA = 100.0

# --- Screen heights [3], [4] ------------------------------------------------------------
SCREEN_HEIGHT_35FT_M = 35.0 * FT_M
SCREEN_HEIGHT_15FT_M = 15.0 * FT_M
SCREEN_HEIGHT_50FT_M = 50.0 * FT_M
