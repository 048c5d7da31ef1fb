"""Unit mistakes that stay inside the allowed ranges: warnings, never errors.

A length or height typed in feet where metres are asked for passes every range check when it
is small enough: a 1 500 m runway typed as 4 921 (its length in feet) is a valid ``tora_m``,
and an airfield at 1 600 ft typed as 1 600 is a valid ``elevation_m``. The run would then
compute with a runway 3.28 times too long or an airfield 3.28 times too high, and the first
is on the unsafe side. Nothing in a single value tells feet from metres, so each check uses
what else the tables say and warns only where feet are the likely explanation; the warning
gives the value converted from feet, so the user can tell at a glance:

* **TODA and ASDA against TORA** (same row): a TODA or ASDA 2.9 … 3.7 times the TORA is the
  feet-to-metres factor (3.28), not a clearway or stopway (a clearway may be at most half
  the TORA, ICAO Annex 14 — from memory; stopways are shorter still, common practice);
* **the two directions of one strip** (designators 18 apart, ``09``/``27``, ``09L``/``27R``):
  their TORAs differ by displaced thresholds, never by a factor of 2.9 … 3.7;
* **runway length against the types that use it**: runways over 4 000 m are built for the
  heaviest types; one at an airfield from which only types up to 8 618 kg MTOW (19 000 lb,
  the commuter category of 14 CFR Part 23 — from memory) fly routes is far more likely a
  1 220 … 1 830 m runway given in feet (common practice);
* **elevation against the climate**: the climate table gives the temperature but the
  pressure only as QNH (reduced to sea level, so it says nothing about the elevation). What
  remains is the temperature's plausibility: the hottest month's mean daily maximum brought
  down to sea level with the standard atmosphere's lapse rate (6.5 K/km, ICAO Doc 7488)
  must not exceed 50 °C. The hottest monthly mean daily maxima of low-lying places are about
  47 °C (from memory), so a sea-level equivalent above 50 °C means the elevation is too
  high for the temperatures; when the elevation converted from feet fits, it is flagged.

:func:`check` runs them on the typed tables (user units) and adds its warnings to the
folder's problems; ``schemas.validate`` calls it once the tables are read.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

FOOT_M = 0.3048  # [m] international foot (exact by definition)
FEET_FACTOR_RANGE = (2.9, 3.7)  # a ratio of two lengths that is the feet factor, ±12 %
SMALL_TYPES_MTOW_KG = 8618.0  # [kg] 19 000 lb, commuter category (from memory)
SMALL_TYPES_MAX_TORA_M = 4000.0  # [m] longer runways are built for the heaviest types
LAPSE_K_PER_M = 0.0065  # [K/m] ISA troposphere lapse rate (ICAO Doc 7488)
SEA_LEVEL_HOTTEST_C = 50.0  # [°C] above any low-lying monthly mean daily maximum (~47 °C)
ELEVATION_FROM_M = 300.0  # [m] below this a feet mistake changes little; not checked


def _feet(value_m: float) -> str:
    return f"{value_m * FOOT_M:,.0f} m".replace(",", " ")


def _is_feet_factor(ratio) -> np.ndarray:
    ratio = np.asarray(ratio, dtype=float)
    with np.errstate(invalid="ignore"):
        return (ratio >= FEET_FACTOR_RANGE[0]) & (ratio <= FEET_FACTOR_RANGE[1])


class _Warnings:
    """Warnings of one check: the first rows listed, the rest counted (as schemas.validate)."""

    def __init__(self, out: list, file: str, column: str, expected: str):
        from fieldlimits.schemas.validate import MAX_ROWS_PER_CHECK

        self.out, self.file, self.column, self.expected = out, file, column, expected
        self.room = MAX_ROWS_PER_CHECK
        self.listed = 0
        self.more: list[int] = []

    def add(self, row: int, value, message: str) -> None:
        from fieldlimits.schemas.validate import Problem, _text

        if self.listed < self.room:
            self.out.append(Problem("warning", self.file, int(row), self.column, _text(value),
                                    self.expected, message))
            self.listed += 1
        else:
            self.more.append(int(row))

    def close(self) -> None:
        from fieldlimits.schemas.validate import _rows_summary

        if self.more:
            self.out.append(_rows_summary("warning", self.file, self.column, self.expected)(
                len(self.more), self.more[:10]))


def _designator(runway_id) -> tuple[int, str] | None:
    m = re.fullmatch(r"(\d{1,2})([LCR]?)", str(runway_id).strip().upper())
    if not m or not 1 <= int(m.group(1)) <= 36:
        return None
    return int(m.group(1)), m.group(2)


_OPPOSITE_SIDE = {"L": "R", "R": "L", "C": "C", "": ""}


def runway_warnings(runways: pd.DataFrame, file: str, out: list,
                    aircraft: pd.DataFrame | None = None, routes: pd.DataFrame | None = None) -> None:
    """The runway checks of the module docstring; warnings appended to ``out``."""
    if runways is None or runways.empty:
        return
    rw = runways.reset_index(drop=False).rename(columns={"index": "_row"})
    tora = pd.to_numeric(rw["tora_m"], errors="coerce").to_numpy(float)
    for col, what, expected in (
            ("toda_m", "TODA", "TORA … 1.5 × TORA (a clearway of at most half the TORA)"),
            ("asda_m", "ASDA", "TORA plus a stopway of a few hundred metres")):
        value = pd.to_numeric(rw[col], errors="coerce").to_numpy(float)
        with np.errstate(invalid="ignore", divide="ignore"):
            ratio = value / tora
        w = _Warnings(out, file, col, expected)
        for i in np.flatnonzero(_is_feet_factor(ratio)):
            w.add(rw["_row"].iat[i] + 1, value[i],
                  f"{what} is {ratio[i]:.2f} × the TORA of {tora[i]:,.0f} m, the feet-to-metres "
                  f"factor (3.28), not a clearway or stopway: is {what} in feet "
                  f"({_feet(value[i])}), or TORA in metres and {what} in feet?")
        w.close()

    w = _Warnings(out, file, "tora_m", "the reciprocal direction's TORA within a few hundred metres")
    parsed = [_designator(r) for r in rw["runway_id"]]
    for af, idx in rw.groupby("airfield_id", sort=False).groups.items():
        rows = list(idx)
        for i in rows:
            d = parsed[i]
            if d is None:
                continue
            for j in rows:
                e = parsed[j]
                if j == i or e is None or (d[0] - e[0]) % 36 != 18 or _OPPOSITE_SIDE[d[1]] != e[1]:
                    continue
                if tora[j] > 0 and _is_feet_factor(tora[i] / tora[j]):
                    w.add(rw["_row"].iat[i] + 1, tora[i],
                          f"TORA is {tora[i] / tora[j]:.2f} × that of the reciprocal direction "
                          f"{rw['runway_id'].iat[j]} ({tora[j]:,.0f} m), the feet-to-metres factor: "
                          f"is this row in feet ({_feet(tora[i])})?")
    w.close()

    users = _small_only_airfields(aircraft, routes)
    if users:
        w = _Warnings(out, file, "tora_m",
                      f"a runway of at most {SMALL_TYPES_MAX_TORA_M:,.0f} m where only types up to "
                      f"{SMALL_TYPES_MTOW_KG:,.0f} kg MTOW fly")
        for i in range(len(rw)):
            af = rw["airfield_id"].iat[i]
            if af in users and tora[i] > SMALL_TYPES_MAX_TORA_M:
                w.add(rw["_row"].iat[i] + 1, tora[i],
                      f"a {tora[i]:,.0f} m runway at an airfield from which only "
                      f"{users[af]} fly (MTOW at most {SMALL_TYPES_MTOW_KG:,.0f} kg): is it in "
                      f"feet ({_feet(tora[i])})?")
        w.close()


def _small_only_airfields(aircraft, routes) -> dict[str, str]:
    """Airfields whose routes are flown only by types of MTOW ≤ 8 618 kg → those types."""
    if aircraft is None or routes is None or aircraft.empty or routes.empty:
        return {}
    mtow = dict(zip(aircraft["aircraft_type_id"], pd.to_numeric(aircraft["mtow_kg"], errors="coerce")))
    found = {}
    for af, types in routes.groupby("origin_id")["aircraft_type_id"]:
        masses = [mtow.get(t, np.nan) for t in set(types)]
        if masses and all(np.isfinite(m) and m <= SMALL_TYPES_MTOW_KG for m in masses):
            found[af] = ", ".join(sorted(set(map(str, types))))
    return found


def elevation_warnings(airfields: pd.DataFrame, climate: pd.DataFrame | None, file: str,
                       out: list) -> None:
    """The elevation check of the module docstring; warnings appended to ``out``."""
    if airfields is None or climate is None or airfields.empty or climate.empty:
        return
    hottest = (pd.to_numeric(climate["mean_daily_max_c"], errors="coerce")
               .groupby(climate["airfield_id"]).max())
    elev = pd.to_numeric(airfields["elevation_m"], errors="coerce").to_numpy(float)
    t_max = airfields["airfield_id"].map(hottest).to_numpy(float)
    with np.errstate(invalid="ignore"):
        as_given = t_max + LAPSE_K_PER_M * elev
        in_feet = t_max + LAPSE_K_PER_M * elev * FOOT_M
        flag = (elev >= ELEVATION_FROM_M) & (as_given > SEA_LEVEL_HOTTEST_C) & (in_feet <= SEA_LEVEL_HOTTEST_C)
    w = _Warnings(out, file, "elevation_m",
                  f"an elevation at which the hottest month, brought to sea level at 6.5 K/km, "
                  f"stays below {SEA_LEVEL_HOTTEST_C:.0f} °C")
    for i in np.flatnonzero(flag):
        w.add(airfields.index[i] + 1, elev[i],
              f"the hottest month's mean daily maximum of {t_max[i]:.1f} °C at {elev[i]:,.0f} m would "
              f"be {as_given[i]:.1f} °C at sea level (6.5 K/km), hotter than any low-lying "
              f"climate: is the elevation in feet ({_feet(elev[i])})?")
    w.close()


def check(frames: dict, files: dict, out: list) -> None:
    """All checks on the typed tables ``frames`` (user units); warnings appended to ``out``.

    ``files`` maps table names to the file names shown in the messages.
    """
    name = lambda t: files.get(t, f"{t}.csv")  # noqa: E731
    runway_warnings(frames.get("runways"), name("runways"), out, frames.get("aircraft_types"),
                    frames.get("routes"))
    elevation_warnings(frames.get("airfields"), frames.get("climate_monthly"), name("airfields"),
                       out)
