"""Smoke test of the MPI scaling benchmark (tools/bench_mpi.py) in --quick mode on
one rank: it runs end to end and reports positive finite figures.  No timing
assertion (speed is measured by the benchmark, never by a test)."""
import importlib.util
import json
import math
from pathlib import Path

BENCH = Path(__file__).resolve().parents[1] / "tools" / "bench_mpi.py"


def _load():
    spec = importlib.util.spec_from_file_location("wind2d_bench_mpi", BENCH)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _positive_finite(x):
    return isinstance(x, (int, float)) and math.isfinite(x) and x > 0


def test_bench_mpi_quick_one_rank(capsys):
    bench = _load()
    ret = bench.main(["--quick", "--ranks", "1", "--json", "--quiet"])
    res = json.loads(capsys.readouterr().out)
    assert [r["ranks"] for r in res["weak"]] == [1]
    assert [r["ranks"] for r in res["strong"]] == [1]
    assert res["weak"] == ret["weak"]
    for kind in ("weak", "strong"):
        (row,) = res[kind]
        for key in ("zone_updates_per_s_best", "zone_updates_per_s_median",
                    "zone_updates_per_s_per_rank_best", "step_s_best", "step_s_median",
                    "efficiency_best", "efficiency_median"):
            assert _positive_finite(row[key]), (kind, key, row[key])
        assert all(_positive_finite(x) for x in row["samples_zone_updates_per_s"])
    text = bench.report(res)
    assert "weak scaling" in text and "strong scaling" in text


def test_weak_grid_gives_one_tile_per_rank():
    bench = _load()
    from wind2d.grid.tiles import decompose
    for n in (1, 2, 3, 4, 6, 8, 12, 16):
        n1, n2, px, py = bench.weak_grid(n, 32)
        t = decompose(n1, n2, n, True, True)
        assert (t.px, t.py) == (px, py) and px * py == n
        assert (n1, n2) == (32 * px, 32 * py)
