"""Traffic input (trundle.io.traffic) and the invented-traffic generator.

Bad-row checks use hand-written rows whose problems are obvious by inspection; the gross
tolerance is the one the module states (1 % of the gross, at least 0.5 kN).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from trundle.io.traffic import TrafficFileError, read_traffic, traffic_bytes
from trundle.io.traffic_generator import MIXTURE, invented_traffic
from trundle.io.units import SI

HEADER = "id,timestamp,lane,direction,gross,axle_1,axle_2,axle_3,spacing_1,spacing_2\n"
GOOD = [
    "t1,2026-02-01T08:00:00,1,+1,300,100,100,100,4.0,1.3",
    "t2,2026-02-01T09:00:00,2,-1,150,50,100,,4.5,",
    "t3,,1,,90,90,,,,",
]
# (row text, the words its problem must be reported with)
BAD = [
    ("b1,2026-02-01T10:00:00,1,+1,200,-50,250,,4.0,", "axle_1: expected a weight > 0"),
    ("b2,2026-02-01T10:00:00,1,+1,200,100,,100,4.0,1.3", "axle_2: expected a weight"),
    ("b3,2026-02-01T10:00:00,1,+1,200,100,100,,,", "spacing_1: expected a length between"),
    ("b4,2026-02-01T10:00:00,1,+1,200,100,100,,0,", "spacing_1: expected a length > 0"),
    ("b5,2026-02-01T10:00:00,1,+1,200,100,100,,45,", "spacing_1: expected at most 20"),
    ("b6,2026-02-01T10:00:00,1,+1,200,100,100,,4.0,1.3", "spacing_2: given, but there is no"),
    ("b7,2026-02-01T10:00:00,1,+1,250,100,100,,4.0,", "gross: the axle weights add up to 200"),
    ("b8,2026-02-01T10:00:00,1,+1,200,abc,100,,4.0,", "axle_1: expected a number"),
    ("b9,2026-02-01T10:00:00,1,+1,,100,100,,4.0,", "gross: expected the gross weight"),
    ("b10,yesterday,1,+1,200,100,100,,4.0,", "timestamp: expected ISO 8601"),
    ("b11,2026-02-01T10:00:00,1,north,200,100,100,,4.0,", "direction: expected +1, -1"),
    ("b12,2026-02-01T10:00:00,1,+1,200,,,,,", "expected at least one axle weight"),
]


def _write(tmp_path: Path, rows: list[str]) -> Path:
    path = tmp_path / "traffic.csv"
    path.write_text(HEADER + "\n".join(rows) + "\n")
    return path


def test_good_rows_are_read_into_rows_of_arrays(tmp_path: Path) -> None:
    traffic = read_traffic(_write(tmp_path, GOOD))
    assert traffic.n_trucks == 3
    assert traffic.axle_count.tolist() == [3, 2, 1]
    np.testing.assert_array_equal(traffic.axle_weight, [100, 100, 100, 50, 100, 90])
    np.testing.assert_array_equal(traffic.axle_offset, [0, 4.0, 5.3, 0, 4.5, 0])
    assert traffic.direction.tolist() == [1, -1, 0]
    assert np.isnat(traffic.timestamp[2]) and not np.isnat(traffic.timestamp[0])
    assert traffic.skipped == ()


def test_every_kind_of_bad_row_is_reported_with_its_row_number(tmp_path: Path) -> None:
    rows = GOOD + [text for text, _ in BAD]
    path = _write(tmp_path, rows)
    with pytest.raises(TrafficFileError) as error:
        read_traffic(path, bad_rows="fail")
    message = str(error.value)
    assert str(path) in message and f"{len(BAD)} bad row(s)" in message
    for k, (_, words) in enumerate(BAD):
        row = len(GOOD) + k + 1
        assert f"row {row} (line {row + 1}) id 'b{k + 1}': " in message
        part = message.split(f"row {row} (line {row + 1})")[1].split("; row ")[0]
        assert words in part, (words, part)


def test_skip_drops_and_counts_bad_rows(tmp_path: Path) -> None:
    traffic = read_traffic(_write(tmp_path, GOOD + [text for text, _ in BAD]), bad_rows="skip")
    assert traffic.n_trucks == len(GOOD)
    assert [b.row for b in traffic.skipped] == list(range(len(GOOD) + 1, len(GOOD) + len(BAD) + 1))
    assert traffic.truck_id.tolist() == ["t1", "t2", "t3"]


def test_gross_tolerance_is_the_stated_one(tmp_path: Path) -> None:
    # 1 % of 300 kN is 3 kN: 302.9 passes, 303.1 does not
    ok = "a,,,,302.9,100,100,100,4.0,1.3"
    bad = "b,,,,303.1,100,100,100,4.0,1.3"
    assert read_traffic(_write(tmp_path, [ok])).n_trucks == 1
    with pytest.raises(TrafficFileError, match="row 1 .*within 3.031"):
        read_traffic(_write(tmp_path, [bad]))


def test_header_problems_name_the_column(tmp_path: Path) -> None:
    path = tmp_path / "t.csv"
    path.write_text("id,axle_1\nx,10\n")
    with pytest.raises(TrafficFileError, match="column 'gross'"):
        read_traffic(path)
    path.write_text("id,gross,axle_2\nx,10,10\n")
    with pytest.raises(TrafficFileError, match="column axle_1"):
        read_traffic(path)
    with pytest.raises(TrafficFileError, match="units: expected SI or US"):
        read_traffic(path, units="metric")
    with pytest.raises(TrafficFileError, match="expected a .csv or .parquet"):
        read_traffic(tmp_path / "t.xlsx")


@pytest.mark.parametrize("fmt", ["csv", "parquet"])
def test_invented_traffic_round_trips_through_both_formats(tmp_path: Path, fmt: str) -> None:
    traffic = invented_traffic(500, seed=7)
    path = tmp_path / f"t.{fmt}"
    path.write_bytes(traffic_bytes(traffic, fmt))
    back = read_traffic(path)
    assert back.invented
    np.testing.assert_array_equal(back.axle_start, traffic.axle_start)
    np.testing.assert_array_equal(back.axle_weight, traffic.axle_weight)
    np.testing.assert_allclose(back.axle_offset, traffic.axle_offset, rtol=0, atol=1e-12)
    np.testing.assert_array_equal(back.timestamp, traffic.timestamp)
    np.testing.assert_array_equal(back.direction, traffic.direction)


def test_us_units_convert_exactly(tmp_path: Path) -> None:
    us = invented_traffic(50, seed=3, units="US")
    si = invented_traffic(50, seed=3)
    # 1 kip = 4.4482216152605 kN, 1 ft = 0.3048 m (exact definitions, NIST SP 811, 2008, B.8)
    np.testing.assert_allclose(us.axle_weight * 4.4482216152605, si.axle_weight, rtol=1e-13)
    np.testing.assert_allclose(us.axle_offset * 0.3048, si.axle_offset, rtol=1e-13)
    path = tmp_path / "us.parquet"
    path.write_bytes(traffic_bytes(us, "parquet"))
    back = read_traffic(path, units="US").in_units(SI)
    np.testing.assert_allclose(back.axle_weight, si.axle_weight, rtol=1e-13)


def test_the_generator_is_seeded_and_follows_its_stated_mixture() -> None:
    a, b = invented_traffic(20_000, seed=11), invented_traffic(20_000, seed=11)
    np.testing.assert_array_equal(a.axle_weight, b.axle_weight)
    assert not np.array_equal(invented_traffic(100, seed=12).axle_weight, a.axle_weight[:100])
    shares = np.bincount(a.axle_count, minlength=7)[2:] / a.n_trucks
    stated = np.array([c.share for c in MIXTURE])
    # binomial standard error at n = 20 000 is at most 0.0035: 5 of them
    np.testing.assert_allclose(shares, stated, atol=0.018)
    np.testing.assert_allclose(np.add.reduceat(a.axle_weight, a.axle_start[:-1]), a.gross,
                               rtol=1e-12)
    assert (np.diff(a.timestamp.astype(np.int64)) >= 0).all()
    assert "INVENTED" in a.source and a.invented


def test_infinite_numbers_in_a_parquet_file_are_bad_rows(tmp_path: Path) -> None:
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.table({"id": ["a", "b"], "gross": [10.0, float("inf")], "axle_1": [10.0, 5.0]})
    pq.write_table(table, tmp_path / "t.parquet")
    with pytest.raises(TrafficFileError, match=r"row 2 id 'b': gross: expected a finite"):
        read_traffic(tmp_path / "t.parquet")
