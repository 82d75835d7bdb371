"""Smoke test of the throughput benchmark (tools/bench_core.py) in --quick mode:
it runs end to end and reports positive finite figures.  No timing assertion."""
import importlib.util
import json
import math
from pathlib import Path

BENCH = Path(__file__).resolve().parents[1] / "tools" / "bench_core.py"


def _load():
    spec = importlib.util.spec_from_file_location("wind2d_bench_core", BENCH)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _positive_finite(x):
    return isinstance(x, (int, float)) and math.isfinite(x) and x > 0


def test_bench_quick_json(capsys):
    bench = _load()
    ret = bench.main(["--quick", "--json", "--quiet"])
    res = json.loads(capsys.readouterr().out)
    assert res["summary"] == ret["summary"]
    assert set(res["summary"]) == {"gas_32", "mhd_32"}
    for rate in res["summary"].values():
        assert _positive_finite(rate)
    for r in res["results"]:
        assert _positive_finite(r["median_step_zone_updates_per_s"])
        assert _positive_finite(r["held_bytes_per_zone"])
        assert r["step_allocations"]["tracemalloc_peak_bytes"] >= 0
        assert r["profile"]["kernels"]
    for m in res["memory"]:
        assert "error" not in m, m.get("error")
        assert _positive_finite(m["held_bytes_per_zone"])
    for s in res["startup"]:
        assert "error" not in s, s.get("error")
        assert _positive_finite(s["to_end_of_first_step_s"])
