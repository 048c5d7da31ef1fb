"""Rebuild the bundled demo network (``demo_network/data/*.csv``) from compact definitions.

Everything here is invented: the region, its airfields, their climate and winds, the
aircraft types, the routes, the obstacles past some runway ends and the reference points
(the model's own field lengths and climb-limited masses for the demo types, moved by up to
1 % and rounded: see ``REFERENCE_CONDITIONS``). Coordinates sit mostly over open ocean on
purpose.

    python -m fieldlimits.demo_network.build_demo            # rewrite demo_network/data/
    python -m fieldlimits.demo_network.build_demo --out DIR  # write elsewhere

The output is deterministic (fixed seed). Climate: the monthly mean of the daily maximum
temperature follows a cosine through the year around each airfield's annual mean; the wind
rose mixes a von Mises distribution around a (seasonally turning) prevailing direction
with a uniform share, and splits speeds by a Weibull distribution (shape 2).
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent

# --------------------------------------------------------------------------------------
# airfields: id, name, lat, lon, elevation m, climate, wind, strips
# climate: (annual mean of daily max °C, half annual range °C, day-to-day SD °C,
#           QNH mean hPa, wet-day share mean, wet seasonal amplitude, wettest month)
# wind: (prevailing FROM deg, mean speed m/s, calm share, concentration kappa)
# strip: (designator A, true heading A, length m, surface, slope % in direction A,
#         clearway A, stopway A, clearway B, stopway B, both_ways)
AIRFIELDS = [
    # --- Varrow Coast: sea-level coast
    ("saltmere", "Saltmere International", 41.20, -39.50, 5,
     (19.0, 8.0, 3.0, 1016, 0.30, 0.15, 1), (250, 5.5, 0.08, 1.2),
     [("08", 73, 3400, "paved", 0.1, 280, 60, 200, 60, True),
      ("15", 146, 2700, "paved", -0.3, 150, 0, 150, 0, True)]),
    ("gullhaven", "Gullhaven", 42.85, -38.10, 12,
     (18.0, 7.5, 2.8, 1015, 0.32, 0.14, 12), (230, 6.0, 0.07, 1.3),
     [("04", 36, 2400, "paved", 0.2, 120, 0, 120, 0, True)]),
    ("brinewick", "Brinewick Harbour", 39.90, -41.30, 3,
     (20.0, 7.0, 2.6, 1016, 0.28, 0.14, 1), (270, 5.0, 0.10, 1.0),
     [("10", 93, 1800, "paved", -0.4, 60, 0, 0, 60, True)]),
    ("cape-tallow", "Cape Tallow", 38.70, -37.40, 28,
     (21.0, 7.0, 2.7, 1017, 0.26, 0.14, 1), (320, 6.5, 0.06, 1.6),
     [("17", 164, 2100, "paved", 0.5, 100, 0, 100, 0, True)]),
    ("harrowport", "Harrowport", 40.40, -36.20, 8,
     (20.5, 7.5, 2.9, 1016, 0.27, 0.13, 1), (240, 5.0, 0.09, 1.1),
     [("06", 55, 3000, "paved", 0.0, 200, 100, 200, 100, True)]),
    ("gannet-isle", "Gannet Isle", 43.60, -35.10, 18,
     (16.5, 6.0, 2.4, 1014, 0.38, 0.15, 12), (40, 8.5, 0.03, 2.2),
     [("13", 125, 1250, "paved", 0.8, 0, 0, 0, 0, True)]),
    ("kelpstone", "Kelpstone", 44.20, -40.80, 40,
     (15.5, 6.5, 2.5, 1013, 0.40, 0.15, 12), (260, 7.0, 0.05, 1.4),
     [("02", 16, 1500, "paved", 1.2, 60, 0, 60, 0, True)]),
    # --- Ochre Basin: hot desert
    ("dunmarrow", "Dunmarrow", 28.40, -37.90, 420,
     (33.5, 10.5, 2.5, 1010, 0.03, 0.02, 2), (340, 4.5, 0.12, 1.5),
     [("17", 168, 3000, "paved", 0.3, 300, 0, 300, 0, True)]),
    ("ashfall-flats", "Ashfall Flats", 27.10, -36.40, 680,
     (34.0, 11.0, 2.4, 1011, 0.02, 0.02, 2), (20, 5.0, 0.10, 1.4),
     [("01", 6, 2300, "paved", -0.2, 150, 0, 150, 0, True)]),
    ("sunscar", "Sunscar", 26.30, -39.60, 250,
     (35.0, 11.0, 2.2, 1009, 0.02, 0.02, 2), (10, 4.0, 0.15, 1.2),
     [("18", 178, 1600, "paved", 0.6, 60, 0, 60, 0, True)]),
    ("ochre-wells", "Ochre Wells", 29.80, -34.70, 1100,
     (30.0, 11.5, 2.6, 1013, 0.04, 0.03, 3), (300, 5.5, 0.10, 1.3),
     [("12", 115, 2600, "paved", 0.4, 200, 100, 200, 100, True)]),
    ("saltpan-strip", "Saltpan Strip", 25.60, -35.80, 90,
     (36.0, 11.5, 2.3, 1009, 0.01, 0.01, 2), (30, 4.5, 0.14, 1.1),
     [("04", 38, 1400, "gravel", 0.2, 0, 0, 0, 0, True)]),
    ("mirage-junction", "Mirage Junction", 30.60, -38.80, 520,
     (32.0, 10.5, 2.5, 1011, 0.03, 0.02, 2), (330, 5.0, 0.11, 1.3),
     [("16", 155, 3700, "paved", 0.2, 300, 0, 300, 0, True),
      ("07", 65, 2200, "paved", 0.0, 0, 0, 0, 0, True)]),
    # --- Kessel Highlands: high plateau
    ("highcrag-north", "Highcrag North", 35.40, -43.20, 3350,
     (15.5, 7.0, 2.8, 1021, 0.12, 0.08, 7), (260, 6.0, 0.08, 1.2),
     [("09", 86, 4000, "paved", -0.2, 300, 0, 300, 0, True),
      ("14", 137, 2900, "paved", 0.6, 200, 0, 200, 0, True)]),
    ("highcrag-south", "Highcrag South", 34.60, -42.70, 2850,
     (18.0, 7.5, 3.0, 1020, 0.12, 0.08, 7), (250, 5.5, 0.09, 1.1),
     [("11", 106, 3100, "paved", 0.5, 200, 0, 200, 0, True)]),
    ("tallon-mesa", "Tallon Mesa", 33.80, -44.10, 4050,
     (11.0, 6.0, 2.7, 1022, 0.15, 0.10, 7), (280, 7.0, 0.06, 1.3),
     [("12", 118, 3800, "paved", 0.3, 300, 0, 300, 0, True)]),
    ("windgap", "Windgap", 34.10, -41.60, 2600,
     (19.0, 8.0, 3.0, 1019, 0.10, 0.07, 7), (240, 8.0, 0.05, 1.8),
     [("07", 64, 2200, "paved", 1.5, 700, 500, 100, 0, True)]),
    ("fernbrook", "Fernbrook", 36.30, -40.90, 1450,
     (22.0, 9.0, 3.2, 1018, 0.16, 0.09, 12), (270, 4.5, 0.12, 1.0),
     [("15", 148, 2000, "paved", -0.8, 800, 500, 100, 0, True)]),
    ("stonebridge", "Stonebridge", 37.20, -42.40, 900,
     (23.0, 9.5, 3.1, 1017, 0.18, 0.10, 12), (280, 4.0, 0.14, 1.0),
     [("03", 26, 2500, "paved", 0.3, 150, 0, 150, 0, True)]),
    ("cinder-pass", "Cinder Pass", 35.00, -44.60, 3100,
     (16.5, 7.5, 3.0, 1021, 0.11, 0.08, 7), (290, 6.5, 0.07, 1.5),
     [("10", 97, 1500, "gravel", 1.0, 0, 0, 0, 0, True)]),
    # --- Frostmark: cold north
    ("frostwick", "Frostwick", 56.20, -42.30, 40,
     (5.0, 11.0, 3.8, 1010, 0.35, 0.12, 11), (220, 7.0, 0.05, 1.2),
     [("06", 57, 1200, "gravel", 0.4, 0, 0, 0, 0, True)]),
    ("ice-harbour", "Ice Harbour", 57.40, -40.10, 15,
     (4.0, 10.5, 3.6, 1009, 0.38, 0.12, 11), (200, 7.5, 0.04, 1.3),
     [("14", 133, 1900, "paved", 0.2, 100, 0, 100, 0, True)]),
    ("north-tarn", "North Tarn", 58.10, -44.20, 210,
     (2.5, 12.0, 4.0, 1010, 0.33, 0.12, 10), (240, 6.0, 0.07, 1.1),
     [("11", 103, 900, "gravel", -0.6, 0, 0, 0, 0, True)]),
    ("pinecairn", "Pinecairn", 55.30, -45.10, 330,
     (6.5, 12.0, 4.0, 1011, 0.34, 0.12, 10), (250, 4.5, 0.12, 0.9),
     [("09", 84, 750, "grass", 0.8, 0, 0, 0, 0, True)]),
    ("hollow-reach", "Hollow Reach", 57.00, -37.60, 120,
     (3.5, 11.5, 3.9, 1009, 0.36, 0.12, 11), (210, 6.5, 0.06, 1.2),
     [("05", 46, 1000, "dirt", 0.3, 0, 0, 0, 0, True)]),
    ("lastlight", "Lastlight", 58.50, -39.30, 60,
     (2.0, 11.5, 4.1, 1008, 0.37, 0.12, 11), (190, 7.0, 0.05, 1.2),
     [("16", 154, 1400, "gravel", -0.3, 0, 0, 0, 0, True)]),
    ("whitecliff", "Whitecliff", 54.60, -41.10, 25,
     (8.0, 10.0, 3.5, 1011, 0.34, 0.12, 11), (230, 6.5, 0.06, 1.2),
     [("12", 114, 2600, "paved", 0.1, 200, 0, 200, 0, True)]),
    # --- Midlands: short grass and gravel strips and small towns
    ("meadowend", "Meadowend", 46.10, -43.80, 150,
     (16.0, 9.5, 3.4, 1016, 0.28, 0.10, 11), (260, 4.0, 0.15, 0.9),
     [("07", 62, 650, "grass", -0.5, 0, 0, 0, 0, True)]),
    ("clover-field", "Clover Field", 45.40, -42.20, 280,
     (17.0, 10.0, 3.5, 1016, 0.27, 0.10, 11), (250, 4.0, 0.14, 0.9),
     [("13", 124, 900, "grass", 0.7, 0, 0, 0, 0, True)]),
    ("bracken-strip", "Bracken Strip", 47.30, -41.40, 410,
     (15.5, 10.0, 3.5, 1016, 0.29, 0.10, 11), (240, 4.5, 0.12, 1.0),
     [("02", 21, 1100, "gravel", 2.0, 0, 0, 0, 0, True)]),
    ("ridgeline-strip", "Ridgeline Strip", 46.80, -44.90, 760,
     (15.0, 10.0, 3.6, 1017, 0.26, 0.10, 11), (300, 5.0, 0.10, 1.2),
     [("27", 266, 850, "dirt", -3.0, 0, 0, 0, 0, False)]),
    ("oakenfold", "Oakenfold", 45.90, -40.60, 300,
     (18.5, 10.0, 3.3, 1016, 0.25, 0.10, 11), (250, 4.5, 0.12, 1.0),
     [("05", 47, 2500, "paved", 0.3, 150, 0, 150, 0, True)]),
    ("mill-crossing", "Mill Crossing", 44.70, -38.70, 190,
     (19.0, 9.5, 3.2, 1016, 0.26, 0.10, 11), (240, 4.5, 0.12, 1.0),
     [("09", 85, 1700, "paved", -0.2, 600, 400, 60, 0, True)]),
    # --- distant gateways for the long-range routes
    ("far-meridian", "Far Meridian", 8.20, -30.40, 10,
     (30.5, 1.5, 1.4, 1011, 0.45, 0.25, 8), (70, 5.5, 0.05, 2.0),
     [("06", 62, 3800, "paved", 0.1, 300, 0, 300, 0, True)]),
    ("southreach", "Southreach", -12.30, -18.40, 30,
     (29.0, 2.5, 1.6, 1012, 0.35, 0.20, 2), (130, 6.0, 0.04, 2.2),
     [("13", 127, 3500, "paved", 0.2, 300, 0, 300, 0, True)]),
    ("eastmoor", "Eastmoor", 48.10, -12.40, 45,
     (14.0, 6.5, 2.6, 1014, 0.40, 0.12, 12), (250, 6.5, 0.05, 1.3),
     [("08", 75, 2800, "paved", -0.1, 200, 0, 200, 0, True)]),
]

# landing distance available (lda_m): every direction of these airfields declares one, the
# length less a displaced threshold where one is listed below; the other airfields give
# none (no landing check: their rows say not_checked), among them the long-haul
# destinations, the short island strip of Gannet Isle and the strips under 900 m (where the
# 60 % dispatch rule leaves the demo's turboprops no landing mass)
LDA_AIRFIELDS = {
    "saltmere", "gullhaven", "brinewick", "cape-tallow", "harrowport", "kelpstone", "dunmarrow",
    "ashfall-flats", "saltpan-strip", "highcrag-north", "cinder-pass", "frostwick",
    "hollow-reach", "lastlight", "whitecliff", "eastmoor", "oakenfold", "bracken-strip",
    "clover-field",
}
DISPLACED_THRESHOLD_M = {("harrowport", "06"): 300, ("brinewick", "10"): 200, ("kelpstone", "20"): 150,
                         ("eastmoor", "26"): 250}

# explicit percentiles of the daily maximum in the climate table for these airfields
WITH_PERCENTILES = {"saltmere", "dunmarrow", "highcrag-north", "frostwick", "far-meridian",
                    "sunscar"}

# --------------------------------------------------------------------------------------
# aircraft types (invented; values plausible for the class, not those of any real type)
AIRCRAFT_COLUMNS = (
    "aircraft_type_id", "name", "mtow_kg", "oew_kg", "max_payload_kg", "max_fuel_kg",
    "max_landing_mass_kg", "wing_area_m2", "wing_span_m", "wing_height_m", "cd0_clean",
    "cd0_gear", "cd0_takeoff_flaps", "oswald_efficiency", "cl_ground_roll", "cl_max_takeoff",
    "vr_over_vs", "vlof_over_vs", "v2_over_vs", "engine_count", "thrust_model",
    "static_thrust_per_engine_kn", "thrust_linear_per_engine_n_per_mps",
    "thrust_quadratic_per_engine_n_per_mps2", "bypass_ratio", "flat_rate_oat_c",
    "shaft_power_per_engine_kw", "propeller_efficiency", "engine_out_drag_cd", "vmcg_kt",
    "braking_cl", "braking_cd_increment", "idle_thrust_fraction", "tailwind_limit_kt",
    "crosswind_limit_kt", "cruise_tas_kt", "cruise_lift_to_drag", "cruise_tsfc_g_per_kn_s",
    "cruise_psfc_kg_per_kwh", "taxi_fuel_kg", "max_passengers",
    "cl_max_landing", "cd0_landing_flaps", "landing_braking_cl", "landing_free_roll_s",
)
_ = None  # a blank cell
AIRCRAFT = [
    ("light-single-4", "Four-seat piston single", 1150, 735, 360, 140, 1150,
     16.0, 10.9, 1.0, 0.030, 0.012, 0.008, 0.74, 0.45, 1.75, 1.10, 1.15, 1.25,
     1, "propeller", 2.6, _, _, _, 15, 135, 0.72, 0.0, 0,
     0.30, 0.0, 0.05, 10, 15, 118, 10.5, _, 0.29, 3, 3,
     2.10, 0.050, 0.45, 1.0),
    ("utility-tp19", "Nineteen-seat utility twin turboprop", 7650, 4350, 1950, 1500, 7450,
     32.5, 17.8, 1.5, 0.026, 0.015, 0.012, 0.80, 0.50, 2.20, 1.06, 1.12, 1.22,
     2, "propeller", 14.5, _, _, _, 29, 610, 0.78, 0.010, 72,
     0.20, 0.020, 0.05, 10, 25, 245, 12.0, _, 0.31, 20, 19,
     2.60, 0.060, 0.40, 1.5),
    ("regional-tp70", "Seventy-seat regional twin turboprop", 23200, 13600, 7600, 5100, 22600,
     61.0, 27.2, 2.0, 0.025, 0.014, 0.012, 0.82, 0.55, 2.35, 1.06, 1.12, 1.20,
     2, "propeller", 44.0, _, _, _, 30, 1950, 0.80, 0.009, 92,
     0.15, 0.025, 0.05, 10, 30, 270, 15.0, _, 0.28, 60, 70,
     2.80, 0.065, 0.35, 1.5),
    ("stol-quad-tp50", "Fifty-seat four-engine short-field turboprop", 20500, 12600, 5600,
     4600, 19800,
     71.0, 28.4, 1.9, 0.028, 0.016, 0.015, 0.78, 0.70, 2.80, 1.05, 1.10, 1.18,
     4, "propeller", 19.0, _, _, _, 28, 820, 0.78, 0.007, 62,
     0.25, 0.030, 0.05, 10, 25, 225, 13.5, _, 0.30, 50, 50,
     3.30, 0.080, 0.45, 1.5),
    ("bizjet-quadratic", "Ten-seat long-range business twin jet", 18200, 10600, 1450, 7200,
     16100,
     50.5, 21.3, 1.2, 0.020, 0.016, 0.012, 0.80, 0.25, 1.95, 1.05, 1.10, 1.20,
     2, "quadratic", 32.5, -62.0, 0.13, _, 30, _, _, 0.006, 96,
     0.10, 0.030, 0.06, 10, 24, 455, 14.5, 18.5, _, 60, 10,
     2.30, 0.060, 0.15, 1.5),
    ("regional-jet90", "Ninety-seat regional twin jet", 42500, 25300, 10600, 10200, 38300,
     78.5, 27.9, 1.8, 0.021, 0.017, 0.013, 0.79, 0.30, 2.30, 1.05, 1.10, 1.20,
     2, "turbofan", 60.0, _, _, 5.0, 30, _, _, 0.006, 106,
     0.05, 0.035, 0.06, 10, 29, 440, 15.5, 17.5, _, 150, 90,
     2.70, 0.065, 0.10, 2.0),
    ("narrowbody-180", "180-seat single-aisle twin jet", 74600, 41300, 18500, 18900, 64900,
     118.0, 33.4, 2.3, 0.020, 0.018, 0.014, 0.80, 0.35, 2.45, 1.05, 1.10, 1.20,
     2, "turbofan", 112.0, _, _, 5.5, 30, _, _, 0.005, 112,
     0.05, 0.040, 0.06, 15, 33, 450, 17.0, 16.5, _, 200, 180,
     2.90, 0.070, 0.10, 2.0),
    ("longrange-twin300", "300-seat long-range wide-body twin jet", 286000, 152500, 52000,
     118500, 214000,
     412.0, 62.5, 4.6, 0.018, 0.016, 0.014, 0.80, 0.35, 2.25, 1.05, 1.10, 1.20,
     2, "turbofan", 435.0, _, _, 9.0, 30, _, _, 0.005, 124,
     0.05, 0.040, 0.06, 15, 35, 485, 19.0, 15.0, _, 650, 320,
     2.70, 0.070, 0.10, 2.0),
]

# --------------------------------------------------------------------------------------
# routes: (origin, destination, type, route_factor, contingency %, alternate km,
#          final reserve min, passenger mass kg) — blanks take the documented defaults
ROUTES = [
    ("saltmere", "southreach", "longrange-twin300", _, _, _, _, _),
    ("saltmere", "far-meridian", "longrange-twin300", _, _, _, _, _),
    ("dunmarrow", "southreach", "longrange-twin300", 1.04, _, 450, _, _),
    ("highcrag-north", "southreach", "longrange-twin300", _, _, _, _, _),
    ("whitecliff", "far-meridian", "longrange-twin300", _, 3, _, _, _),
    ("mirage-junction", "eastmoor", "longrange-twin300", _, _, _, _, _),
    ("saltmere", "dunmarrow", "narrowbody-180", _, _, _, _, _),
    ("saltmere", "highcrag-north", "narrowbody-180", _, _, _, _, _),
    ("saltmere", "eastmoor", "narrowbody-180", _, _, _, _, _),
    ("saltmere", "whitecliff", "narrowbody-180", _, _, _, _, _),
    ("dunmarrow", "harrowport", "narrowbody-180", _, _, _, _, _),
    ("ashfall-flats", "saltmere", "narrowbody-180", _, _, _, _, _),
    ("highcrag-south", "saltmere", "narrowbody-180", _, _, _, _, _),
    ("mirage-junction", "gullhaven", "narrowbody-180", _, _, _, _, _),
    ("tallon-mesa", "saltmere", "narrowbody-180", _, _, 300, _, _),
    ("ochre-wells", "eastmoor", "narrowbody-180", _, _, _, _, _),
    ("saltmere", "gannet-isle", "regional-jet90", _, _, _, _, _),
    ("saltmere", "kelpstone", "regional-jet90", _, _, _, _, _),
    ("windgap", "saltmere", "regional-jet90", _, _, _, _, _),
    ("fernbrook", "oakenfold", "regional-jet90", _, _, _, _, _),
    ("sunscar", "dunmarrow", "regional-jet90", _, _, 250, _, _),
    ("stonebridge", "harrowport", "regional-jet90", _, _, _, _, _),
    ("ice-harbour", "whitecliff", "regional-jet90", _, _, _, _, _),
    ("highcrag-north", "saltmere", "bizjet-quadratic", _, _, _, _, _),
    ("tallon-mesa", "dunmarrow", "bizjet-quadratic", _, _, _, _, _),
    ("brinewick", "eastmoor", "bizjet-quadratic", _, _, _, _, _),
    ("saltmere", "brinewick", "regional-tp70", _, _, 200, _, _),
    ("gullhaven", "cape-tallow", "regional-tp70", _, _, 200, _, _),
    ("whitecliff", "lastlight", "regional-tp70", _, _, 200, _, _),
    ("ochre-wells", "saltpan-strip", "regional-tp70", _, _, 200, _, _),
    ("highcrag-south", "cinder-pass", "regional-tp70", _, _, 150, _, _),
    ("mill-crossing", "oakenfold", "regional-tp70", _, _, 150, _, _),
    ("whitecliff", "frostwick", "utility-tp19", _, _, 150, _, _),
    ("whitecliff", "north-tarn", "utility-tp19", _, _, 150, _, _),
    ("ice-harbour", "hollow-reach", "utility-tp19", _, _, 120, _, _),
    ("lastlight", "north-tarn", "utility-tp19", _, _, 150, _, _),
    ("oakenfold", "bracken-strip", "utility-tp19", _, _, 100, _, _),
    ("highcrag-north", "cinder-pass", "utility-tp19", _, _, 100, _, _),
    ("mill-crossing", "ridgeline-strip", "stol-quad-tp50", _, _, 150, _, _),
    ("saltpan-strip", "ashfall-flats", "stol-quad-tp50", _, _, 150, _, _),
    ("whitecliff", "pinecairn", "stol-quad-tp50", _, _, 150, _, _),
    ("meadowend", "clover-field", "light-single-4", 1.02, _, 60, 45, 90),
    ("clover-field", "ridgeline-strip", "light-single-4", 1.02, _, 60, 45, 90),
    ("pinecairn", "north-tarn", "light-single-4", 1.02, _, 80, 45, 90),
]

# --------------------------------------------------------------------------------------
# obstacles past the end of TODA (invented): terrain in the Kessel Highlands, masts, cliffs
# and cranes on the Varrow Coast, chosen so that some months and types are obstacle limited.
# (airfield, runway direction, obstacle id, distance from the end of TODA m, height above the
#  runway end m, lateral offset m; all inside the departure area, all below 1 465 ft)
OBSTACLES = [
    ("windgap", "07", "ridge", 3000, 60, 0),
    ("windgap", "07", "mast", 1200, 12, -150),
    ("stonebridge", "03", "pine-hill", 4500, 90, 200),
    ("stonebridge", "03", "pylon", 2000, 30, -250),
    ("highcrag-south", "11", "spur", 2500, 40, 100),
    ("highcrag-north", "14", "antenna", 5200, 75, 500),
    ("cinder-pass", "10", "crest", 1800, 30, 0),
    ("cape-tallow", "17", "cliff", 700, 28, 40),
    ("kelpstone", "02", "headland", 2200, 50, -120),
    ("kelpstone", "20", "harbour-crane", 900, 20, 80),
    ("gannet-isle", "13", "lighthouse", 900, 22, 60),
    ("gannet-isle", "31", "sea-stack", 1500, 35, -180),
]

# --------------------------------------------------------------------------------------
# reference points for `fieldlimits calibrate` (invented): the model's own figures for the
# demo types above at these conditions, each moved by a fixed pseudo-random share of at most
# REFERENCE_SPREAD and rounded (field lengths to 10 m, masses to 10 kg), so that a fit has
# something to absorb. They are not chart readings of any real type.
# (point id, kind, mass as a share of MTOW, pressure altitude m, OAT °C, condition)
REFERENCE_CONDITIONS = [
    ("sl-isa-mtow", "field_length", 1.00, 0, 15, "dry"),
    ("sl-isa-90", "field_length", 0.90, 0, 15, "dry"),
    ("sl-isa-80", "field_length", 0.80, 0, 15, "dry"),
    ("sl-hot-mtow", "field_length", 1.00, 0, 40, "dry"),
    ("1500m-warm-90", "field_length", 0.90, 1500, 25, "dry"),
    ("sl-isa-mtow-wet", "field_length", 1.00, 0, 15, "wet"),
]
# the climb-limited mass at the first of these (pressure altitude m, OAT °C) where it is
# below MTOW
CLIMB_CONDITIONS = [(1500, 40), (2500, 30), (3000, 35), (4000, 30)]
REFERENCE_SPREAD = 0.01
REFERENCE_SEED = 2615
REFERENCE_SOURCE = "invented: demo model, moved by up to 1 %"

SPEED_CLASSES = ((1.5, 4.0), (4.0, 8.0), (8.0, 13.0), (13.0, 25.0))
CALM_MPS = 1.5
SECTORS = 16


def _climate_rows(afid, lat, climate, rng) -> list[dict]:
    tmean, amp, sd, qnh, wet, wet_amp, wet_month = climate
    peak = 7.3 if lat >= 0 else 1.3
    rows = []
    for m in range(1, 13):
        phase = np.cos(2 * np.pi * (m - peak) / 12.0)
        t = tmean + amp * phase + rng.normal(0, 0.25)
        s = sd * (1.0 + 0.12 * (-phase)) + rng.normal(0, 0.05)
        q = qnh - 3.0 * phase * (1 if abs(lat) > 20 else 0.3) + rng.normal(0, 0.4)
        w = wet + wet_amp * np.cos(2 * np.pi * (m - wet_month) / 12.0) + rng.normal(0, 0.01)
        row = {"airfield_id": afid, "month": m, "mean_daily_max_c": round(t, 1),
               "sd_daily_max_c": round(max(s, 0.8), 1), "qnh_hpa": round(q, 1),
               "wet_day_share": round(min(max(w, 0.0), 0.95), 2),
               "p50_daily_max_c": None, "p85_daily_max_c": None, "p95_daily_max_c": None}
        if afid in WITH_PERCENTILES:
            # daily maxima are a little skewed: a shorter hot tail than the normal's
            sdv = row["sd_daily_max_c"]
            row["p50_daily_max_c"] = round(row["mean_daily_max_c"] + 0.1 * sdv, 1)
            row["p85_daily_max_c"] = round(row["mean_daily_max_c"] + 0.95 * sdv, 1)
            row["p95_daily_max_c"] = round(row["mean_daily_max_c"] + 1.5 * sdv, 1)
        rows.append(row)
    return rows


def wind_rose_shares(prevailing_deg, mean_speed, calm, kappa, *, sectors=SECTORS,
                     classes=SPEED_CLASSES) -> tuple[np.ndarray, np.ndarray]:
    """Calm share and a (sectors × classes) frequency matrix summing to 1 - calm."""
    centres = np.arange(sectors) * 360.0 / sectors
    diff = np.deg2rad(centres - prevailing_deg)
    p_dir = 0.25 / sectors + 0.75 * np.exp(kappa * np.cos(diff))
    p_dir = p_dir / p_dir.sum()
    # winds from the prevailing direction are also the stronger ones
    scale = mean_speed / 0.8862 * (1.0 + 0.25 * np.cos(diff))  # Weibull k=2: mean = 0.8862 c
    def cdf(v):
        return 1.0 - np.exp(-(v / scale[:, None]) ** 2)
    lo = np.array([c[0] for c in classes])
    hi = np.array([c[1] for c in classes])
    p_cls = cdf(hi[None, :]) - cdf(lo[None, :])
    p_cls[:, -1] += 1.0 - cdf(hi[-1:][None, :])[:, 0]  # the top class takes the tail
    p_cls = p_cls / p_cls.sum(axis=1, keepdims=True)
    return calm, (1.0 - calm) * p_dir[:, None] * p_cls


def _wind_rows(afid, lat, wind) -> list[dict]:
    prevailing, speed, calm, kappa = wind
    rows = []
    for m in range(1, 13):
        winter = np.cos(2 * np.pi * (m - (1.0 if lat >= 0 else 7.0)) / 12.0)
        _calm, mat = wind_rose_shares((prevailing + 25.0 * winter) % 360.0,
                                  speed * (1.0 + 0.15 * winter),
                                  min(max(calm * (1.0 - 0.4 * winter), 0.01), 0.5), kappa)
        freq = np.round(mat, 5)
        calm_f = round(1.0 - freq.sum(), 5)  # calm row closes the sum exactly
        rows.append({"airfield_id": afid, "month": m, "direction_deg": None,
                     "sector_width_deg": None, "speed_low_mps": 0.0,
                     "speed_high_mps": CALM_MPS, "frequency": calm_f})
        for j in range(SECTORS):
            for k, (lo, hi) in enumerate(SPEED_CLASSES):
                rows.append({"airfield_id": afid, "month": m,
                             "direction_deg": j * 360.0 / SECTORS,
                             "sector_width_deg": 360.0 / SECTORS, "speed_low_mps": lo,
                             "speed_high_mps": hi, "frequency": float(freq[j, k])})
    return rows


def _runway_rows(afid, strips) -> list[dict]:
    def lda(des, length):
        if afid not in LDA_AIRFIELDS:
            return None
        return float(length - DISPLACED_THRESHOLD_M.get((afid, des), 0))

    rows = []
    for (des, hdg, length, surface, slope, cwa, swa, cwb, swb, both) in strips:
        num = int(des)
        rows.append({"airfield_id": afid, "runway_id": des, "heading_true_deg": float(hdg),
                     "tora_m": float(length), "toda_m": float(length + cwa),
                     "asda_m": float(length + swa), "lda_m": lda(des, length), "slope_pct": slope,
                     "surface": surface})
        if both:
            recip = (num + 18 - 1) % 36 + 1
            rows.append({"airfield_id": afid, "runway_id": f"{recip:02d}",
                         "heading_true_deg": float((hdg + 180) % 360),
                         "tora_m": float(length), "toda_m": float(length + cwb),
                         "asda_m": float(length + swb), "lda_m": lda(f"{recip:02d}", length),
                         "slope_pct": -slope + 0.0, "surface": surface})
    return rows


def build_frames(seed: int = 20261) -> dict[str, pd.DataFrame]:
    """All demo tables as frames in the user's units."""
    rng = np.random.default_rng(seed)
    af, rw, cl, wr = [], [], [], []
    for (afid, name, lat, lon, elev, climate, wind, strips) in AIRFIELDS:
        af.append({"airfield_id": afid, "name": name, "latitude_deg": lat,
                   "longitude_deg": lon, "elevation_m": float(elev)})
        rw += _runway_rows(afid, strips)
        cl += _climate_rows(afid, lat, climate, rng)
        wr += _wind_rows(afid, lat, wind)
    types = pd.DataFrame(AIRCRAFT, columns=AIRCRAFT_COLUMNS)
    routes = pd.DataFrame(
        [{"route_id": f"{o}-{d}", "origin_id": o, "destination_id": d, "aircraft_type_id": t,
          "route_factor": rf, "contingency_pct": cp, "alternate_distance_km": alt,
          "final_reserve_min": fr, "passenger_mass_kg": pm}
         for (o, d, t, rf, cp, alt, fr, pm) in ROUTES])
    obstacles = pd.DataFrame(OBSTACLES, columns=["airfield_id", "runway_id", "obstacle_id",
                                                 "distance_from_toda_end_m", "height_m", "lateral_offset_m"])
    return {"airfields": pd.DataFrame(af), "runways": pd.DataFrame(rw),
            "climate_monthly": pd.DataFrame(cl), "wind_rose": pd.DataFrame(wr),
            "aircraft_types": types, "routes": routes, "obstacles": obstacles.astype(
                {c: float for c in ("distance_from_toda_end_m", "height_m", "lateral_offset_m")})}


def reference_point_frame(aircraft_si: pd.DataFrame) -> pd.DataFrame:
    """The invented reference points of the demo types (user units), from the model.

    ``aircraft_si`` is ``schemas.load.load_folder(...).aircraft_types`` of the demo.
    """
    import dataclasses

    from fieldlimits.physics import calibration
    from fieldlimits.physics.weightlimit import Aircraft

    names = [f.name for f in dataclasses.fields(Aircraft)]
    rows = []
    for _, t in aircraft_si.iterrows():
        aircraft = Aircraft(**{f: float(t[f]) for f in names if f in t.index})
        conds = [(pid, kind, share * t["mtow_kg"], alt, oat, cond)
                 for pid, kind, share, alt, oat, cond in REFERENCE_CONDITIONS]
        conds += [(f"climb-{alt}m-{oat}c", "climb_limited_mass", np.nan, alt, oat, "dry")
                  for alt, oat in CLIMB_CONDITIONS]
        pts = calibration.reference_points(
            kind=[c[1] for c in conds], mass_kg=[c[2] for c in conds],
            pressure_altitude_m=[c[3] for c in conds],
            temperature_k=[c[4] + 273.15 for c in conds], reported_headwind_mps=0.0, slope=0.0,
            surface="paved", condition=[c[5] for c in conds], published=np.ones(len(conds)))
        values, _ = calibration.model_values(aircraft, pts)
        climb_done = False
        for (pid, kind, mass, alt, oat, cond), v in zip(conds, values):
            if not np.isfinite(v):
                continue
            if kind == "climb_limited_mass":
                if climb_done or not t["oew_kg"] < v < t["mtow_kg"]:
                    continue
                climb_done = True
            rows.append({"aircraft_type_id": t["aircraft_type_id"], "point_id": pid, "kind": kind,
                         "mass_kg": round(float(mass)) if kind == "field_length" else v,
                         "field_length_m": v if kind == "field_length" else None,
                         "pressure_altitude_m": float(alt), "oat_c": float(oat),
                         "condition": cond, "source": REFERENCE_SOURCE})
    out = pd.DataFrame(rows)
    moved = 1.0 + REFERENCE_SPREAD * np.random.default_rng(REFERENCE_SEED).uniform(-1.0, 1.0, len(out))
    fl = out["kind"] == "field_length"
    out["field_length_m"] = np.where(fl, np.round(out["field_length_m"].astype(float) * moved, -1), np.nan)
    out["mass_kg"] = np.where(fl, out["mass_kg"], np.round(out["mass_kg"].astype(float) * moved, -1))
    return out


def write(out: Path) -> None:
    from fieldlimits.schemas.load import load_folder

    out.mkdir(parents=True, exist_ok=True)
    (out / "reference_points.csv").unlink(missing_ok=True)  # rebuilt from the tables below
    for name, df in build_frames().items():
        df.to_csv(out / f"{name}.csv", index=False, lineterminator="\n", float_format="%.6g")
    points = reference_point_frame(load_folder(out).aircraft_types)
    points.to_csv(out / "reference_points.csv", index=False, lineterminator="\n",
                  float_format="%.6g")


def main(argv=None) -> int:
    p = argparse.ArgumentParser(prog="python -m fieldlimits.demo_network.build_demo",
                                description="Rebuild the invented demo network tables.")
    p.add_argument("--out", type=Path, default=HERE / "data")
    args = p.parse_args(argv)
    write(args.out)
    print(f"demo network written to {args.out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
