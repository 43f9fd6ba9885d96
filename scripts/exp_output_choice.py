"""Does letting the solver place the outputs help?  Fixed placement (outputs on lines
0..p-1) against "auto", on the bundled function instances.  Prints numbers; not a test.

    python scripts/exp_output_choice.py
"""

from __future__ import annotations

import sys
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

import exactsyn as ex  # noqa: E402
from exactsyn.specification.boolean import function_from_mapping  # noqa: E402
from exactsyn.specification.embed import embed  # noqa: E402

INSTANCES = ["half-adder", "full-adder", "decoder2to4", "greenhouse-vent"]


def main() -> None:
    for name in INSTANCES:
        data = tomllib.loads((ROOT / "instances" / f"{name}.toml").read_text())
        row = []
        for mode in ("fixed", "auto"):
            d = dict(data)
            if mode == "fixed":
                d.pop("output_lines", None)
            else:
                d["output_lines"] = "auto"
            spec, _ = embed(function_from_mapping(d, name))
            t0 = time.perf_counter()
            res = ex.synthesise(spec, library="nct", jobs=2)
            assert res.optimal and res.circuit is not None
            row.append(f"{mode}: {len(res.circuit)} gates in {time.perf_counter() - t0:.2f} s")
        print(f"{name:16} " + "   ".join(row), flush=True)


if __name__ == "__main__":
    main()
