"""Class defaults of aircraft_types (schemas.typeclasses): the rule, the values, the fill.

Outside checks: the V_MCG default is 0.9 × the stall speed at MTOW, sea level ISA,
V_S = sqrt(2 m g / (rho0 S CL,max)) (Raymer, Aircraft Design, §5.3, from memory);
the takeoff CL,max defaults are the midpoints of Roskam, Airplane Design Part I, Table 3.1
(from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from fieldlimits.schemas import typeclasses as tc
from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.tables import AIRCRAFT_TYPES
from tests.schemas.conftest import read, write
from tests.schemas.test_validate import errors, only


def test_defaulted_columns_are_the_optional_coefficients_of_the_table():
    optional = {c.name for c in AIRCRAFT_TYPES.columns
                if c.dtype == "float" and not c.required and c.default is None}
    # the two cruise consumptions are blank by thrust model, not by class
    assert set(tc.DEFAULTED_COLUMNS) == optional - {"cruise_tsfc_g_per_kn_s", "cruise_psfc_kg_per_kwh"}
    for cls in tc.CLASS_NAMES:
        assert set(tc.CLASS_DEFAULTS[cls]) == set(tc.DEFAULTED_COLUMNS)


@pytest.mark.parametrize("cls", tc.CLASS_NAMES)
def test_every_default_is_allowed_and_names_its_source(cls):
    for col, d in tc.CLASS_DEFAULTS[cls].items():
        spec = AIRCRAFT_TYPES.column(col)
        assert d.source.strip(), (cls, col)
        assert d.spread >= 0.0
        if d.kind == "value":
            assert spec.min <= d.value <= spec.max, (cls, col)
    d = tc.CLASS_DEFAULTS[cls]
    # the defaults of a class keep the cross-column rules of aircraft_types
    assert d["vr_over_vs"].value <= d["vlof_over_vs"].value <= d["v2_over_vs"].value
    assert d["cl_ground_roll"].value < d["cl_max_takeoff"].value


def test_takeoff_clmax_defaults_are_the_middle_of_roskam_table_3_1():
    # Roskam Part I Table 3.1 (from memory): transport and business jets 1.6-2.2, regional
    # turboprops 1.7-2.1, twins 1.4-2.0, singles 1.3-1.9
    middle = {"transport_jet": 1.9, "business_jet": 1.9, "regional_turboprop": 1.9, "light_twin": 1.7,
              "light_single": 1.6}
    for cls, value in middle.items():
        assert tc.CLASS_DEFAULTS[cls]["cl_max_takeoff"].value == pytest.approx(value)


def test_the_class_rule():
    got = tc.resolve_class(["turbofan", "turbofan", "quadratic", "turbofan", "propeller", "propeller",
                            "propeller", "propeller", "jet"],
                           [2, 2, 2, 2, 2, 2, 1, 1, 2],
                           [70000, 20000, 18000, 40000, 23000, 5700, 1100, 5701, 9000],
                           [180, 12, 19, 0, 70, 9, 4, 9, 10])
    assert list(got) == ["transport_jet", "business_jet", "business_jet", "transport_jet",
                         "regional_turboprop", "light_twin", "light_single", "regional_turboprop", None]


def _planner_row(**over):
    row = {"aircraft_type_id": "planner-jet", "name": "x", "mtow_kg": 70000.0, "oew_kg": 40000.0,
           "wing_area_m2": 120.0, "wing_span_m": 34.0, "engine_count": 2.0, "thrust_model": "turbofan",
           "max_passengers": 170.0, **{c: np.nan for c in tc.DEFAULTED_COLUMNS}}
    row.update(over)
    return pd.DataFrame([row])


def test_fill_takes_the_class_values_and_derives_height_and_vmcg():
    filled, defaulted = tc.fill_class_defaults(_planner_row())
    row = filled.iloc[0]
    assert row["type_class"] == "transport_jet"
    assert bool(defaulted.iloc[0].all())
    assert row["cd0_gear"] == pytest.approx(0.020)
    assert row["wing_height_m"] == pytest.approx(0.07 * 34.0)
    vs = math.sqrt(2 * 70000.0 * 9.80665 / (1.225 * 120.0 * 1.9))  # m/s, sea level ISA
    assert row["vmcg_kt"] == pytest.approx(0.9 * vs / (1852.0 / 3600.0), rel=1e-4)


def test_a_given_value_always_wins_and_feeds_the_derived_defaults():
    filled, defaulted = tc.fill_class_defaults(_planner_row(cl_max_takeoff=2.4, cd0_gear=0.011,
                                                            type_class="business_jet"))
    row = filled.iloc[0]
    assert row["cd0_gear"] == 0.011 and row["cl_max_takeoff"] == 2.4
    assert not defaulted.iloc[0]["cd0_gear"] and defaulted.iloc[0]["cd0_clean"]
    assert row["type_class"] == "business_jet"  # given class, not the rule's
    assert row["cd0_clean"] == pytest.approx(tc.CLASS_DEFAULTS["business_jet"]["cd0_clean"].value)
    vs = math.sqrt(2 * 70000.0 * 9.80665 / (1.225 * 120.0 * 2.4))
    assert row["vmcg_kt"] == pytest.approx(0.9 * vs * 3600.0 / 1852.0, rel=1e-4)


def test_single_engine_types_get_no_engine_out_figures():
    filled, _ = tc.fill_class_defaults(_planner_row(thrust_model="propeller", mtow_kg=1100.0, oew_kg=700.0,
                                                    engine_count=1.0, max_passengers=3.0, wing_area_m2=16.0,
                                                    wing_span_m=11.0))
    row = filled.iloc[0]
    assert row["type_class"] == "light_single"
    assert row["vmcg_kt"] == 0.0 and row["engine_out_drag_cd"] == 0.0


def test_a_derived_default_stays_in_the_allowed_range():
    # a tiny span: 9 % of it would be below the 0.3 m the table allows
    filled, _ = tc.fill_class_defaults(_planner_row(thrust_model="propeller", mtow_kg=900.0, oew_kg=600.0,
                                                    engine_count=1.0, wing_area_m2=9.0, wing_span_m=3.0))
    assert filled.iloc[0]["wing_height_m"] == pytest.approx(AIRCRAFT_TYPES.column("wing_height_m").min)


# --- through check and load -------------------------------------------------------------------

def _blank_coefficients(net, row=0, columns=tc.DEFAULTED_COLUMNS):
    df = read(net, "aircraft_types")
    for c in columns:
        df.loc[row, c] = ""
    write(net, "aircraft_types", df)
    return df


def test_a_type_with_blank_coefficients_passes_check_and_loads_filled(net):
    df = _blank_coefficients(net, row=6)  # narrowbody-180
    assert errors(net) == []
    tables = load_folder(net)
    type_id = df.loc[6, "aircraft_type_id"]
    assert tables.class_defaults[type_id] == tc.DEFAULTED_COLUMNS
    ac = tables.aircraft_types.set_index("aircraft_type_id")
    assert ac.loc[type_id, "cd0_takeoff_flaps"] == pytest.approx(0.015)
    assert ac.loc[type_id, "vmcg_mps"] > 0
    assert tables.user["aircraft_types"].set_index("aircraft_type_id").loc[type_id, "type_class"] == "transport_jet"
    # the other types keep every given value and list no class default
    assert set(tables.class_defaults) == {type_id}


def test_a_cross_column_problem_with_a_class_default_says_so(net):
    df = read(net, "aircraft_types")
    df.loc[6, "vr_over_vs"] = ""          # class default 1.05
    df.loc[6, "vlof_over_vs"] = "1.04"    # given, below it
    write(net, "aircraft_types", df)
    p = only(errors(net), file="aircraft_types.csv", row=7, column="vlof_over_vs")
    assert "vr_over_vs 1.05: blank, class default of transport_jet" in p.value


def test_an_unknown_class_is_refused_with_a_suggestion(net):
    df = read(net, "aircraft_types")
    df["type_class"] = ""
    df.loc[2, "type_class"] = "regional-turboprop"
    write(net, "aircraft_types", df)
    p = only(errors(net), file="aircraft_types.csv", row=3, column="type_class")
    assert "regional_turboprop" in p.message and "regional_turboprop" in p.expected
