"""A large table handed on block by block as it is checked (``load_folder(stream=…)``) and
hashed on the way (``hashing.StreamedHashes``): the same rows and the same hashes as the
table held whole, and no frame of it kept.

The references are the whole-table recipe of :mod:`schemas.hashing` done on a sorted copy
(``test_blocks._whole_copy_hash``) and the frames ``load_folder`` holds without a stream.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from fieldlimits.schemas import hashing, validate
from fieldlimits.schemas.load import TableStream, load_folder

from .conftest import read, write
from .test_blocks import _whole_copy_hash


class Collect(TableStream):
    """Keeps every block, and how many readings were started."""

    def __init__(self):
        self.user, self.si, self.starts = [], [], 0

    def start(self, name):
        self.starts += 1
        self.user, self.si = [], []

    def block(self, name, user, si):
        self.user.append(user)
        self.si.append(si)


def _sorted_wind_rose(net):
    w = read(net, "wind_rose")
    w = w.sort_values(["airfield_id", "month"], key=lambda s: s if s.name == "airfield_id"
                      else s.astype(int), kind="stable")
    write(net, "wind_rose", w)


def _blocks_at(frame: pd.DataFrame, every: int):
    """The frame cut at every ``every``-th airfield-month boundary."""
    am = (frame["airfield_id"].astype(str) + "|" + frame["month"].astype(str)).to_numpy()
    cuts = np.flatnonzero(am[1:] != am[:-1]) + 1
    edges = [0, *cuts[::every].tolist(), len(frame)]
    return [frame.iloc[a:b].reset_index(drop=True) for a, b in zip(edges[:-1], edges[1:]) if b > a]


@pytest.mark.parametrize("every", [1, 7, 1000])
def test_streamed_hashes_equal_the_whole_table_hashes(net, every):
    _sorted_wind_rose(net)
    tables = load_folder(net)
    rose = tables.user["wind_rose"]
    streamed = hashing.StreamedHashes("wind_rose")
    for block in _blocks_at(rose, every):
        streamed.add(block)
    assert streamed.ordered and streamed.rows == len(rose)
    assert streamed.table_hash() == _whole_copy_hash(rose, "wind_rose")
    assert streamed.group_digests() == hashing._group_hashes(rose, "wind_rose", "airfield_id")
    # the airfield hashes from the streamed digests equal those of the table held whole
    assert (hashing.airfield_hashes(tables.user, {"wind_rose": streamed.group_digests()})
            == hashing.airfield_hashes(tables))


def test_blocks_out_of_key_order_are_flagged(net):
    _sorted_wind_rose(net)
    rose = load_folder(net).user["wind_rose"]
    blocks = _blocks_at(rose, 5)
    streamed = hashing.StreamedHashes("wind_rose")
    for block in [blocks[1], blocks[0], *blocks[2:]]:
        streamed.add(block)
    assert not streamed.ordered  # the caller hashes the whole table instead


@pytest.mark.parametrize("shuffle", [False, True])
def test_a_streamed_table_is_handed_on_not_held(net, monkeypatch, shuffle):
    if shuffle:  # airfield-months not together: read again whole, the stream starts over
        w = read(net, "wind_rose")
        write(net, "wind_rose", w.iloc[np.random.default_rng(5).permutation(len(w))])
    held = load_folder(net)
    monkeypatch.setattr(validate, "_READ_ROWS", 50)  # many blocks
    sink = Collect()
    tables = load_folder(net, stream=sink)
    assert tables.streamed == ("wind_rose",)
    assert tables.wind_rose is None and tables.user["wind_rose"] is None
    assert sink.starts == (2 if shuffle else 1) and (len(sink.user) == 1) == shuffle
    user = pd.concat(sink.user, ignore_index=True)
    si = pd.concat(sink.si, ignore_index=True)
    pd.testing.assert_frame_equal(user, held.user["wind_rose"].reset_index(drop=True))
    pd.testing.assert_frame_equal(si, held.wind_rose.reset_index(drop=True))
    # every other table as without the stream
    for name in ("airfields", "runways", "climate_monthly", "aircraft_types", "routes"):
        pd.testing.assert_frame_equal(tables.user[name], held.user[name])
        pd.testing.assert_frame_equal(tables[name], held[name])


def test_bad_streamed_blocks_still_fail_the_load(net):
    w = read(net, "wind_rose")
    w.loc[3, "frequency"] = "2.5"  # a share above 1
    write(net, "wind_rose", w)
    with pytest.raises(validate.InputError) as exc:
        load_folder(net, stream=Collect())
    assert any(p.column == "frequency" and p.row == 4 for p in exc.value.problems)
