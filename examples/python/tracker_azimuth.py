# %% [markdown]
# # Solar tracker, azimuth drive: design, inspect, discretise
#
# A notebook-style script (cells marked `# %%`, so it runs as a plain script too) for an invented
# scenario: the azimuth drive of a solar tracker row. The motor and gearbox give an integrator and
# a lag; the long torque tube adds a lightly damped twist mode near 25 rad/s, which stiffens in
# cold weather. Run it from a build tree with
#
#     PYTHONPATH=build/python python3 examples/python/tracker_azimuth.py
#
# or, after `cmake --install`, with plain `python3`.

# %%
import json
import os
import tempfile

import polewright

spec = {
    "name": "solar tracker row, azimuth drive (motor + gearbox + torque-tube twist)",
    "plant": {
        "gain": 9000,
        "poles": [0, -6, {"wn": 25, "zeta": 0.03}],
        "variants": [
            {"name": "cold morning, stiffer tube", "gain": 11500, "poles": [0, -6, {"wn": 28, "zeta": 0.03}]},
        ],
    },
    "requirements": {
        "overshoot_pct": {"max": 10},
        "settling_time_s": {"max": 1.5},
        "steady_state_error": {"max": 0.2, "input": "ramp"},
        "phase_margin_deg": {"min": 45},
        "gain_margin_db": {"min": 8},
        "crossover_rad_s": {"max": 8},
    },
    "stages": {"lead": 1, "lag": 0, "notch": 1, "integrator": False, "frequency_range_rad_s": [0.1, 200]},
    "search": {"seed": 4, "keep": 3, "objective": "most_robust", "time_limit_s": 30},
}

# %% [markdown]
# ## Design
# The same search as `polewright design`, in-process. Ctrl-C (Kernel > Interrupt) stops it.

# %%
result = polewright.design(spec, threads=0)
print("status:", result["status"])
for c in result["candidates"]:
    print(c["rank"], " + ".join(c["structure"]) or "gain only", "meets" if c["meets"] else "misses")

# %% [markdown]
# ## Step response and loop gain of the top candidate
# `traces` recomputes the sampled step (y, u) per plant and L(jw) on a frequency grid as numpy arrays.

# %%
if result["candidates"]:
    tr = polewright.traces(result, rank=1)
    for p in tr["plants"]:
        name = p["name"] or "nominal"
        print(f"{name}: {p['time_s'].shape[0]} samples to {p['time_s'][-1]:.2f} s, final y {p['y'][-1]:.4f}")
    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
        import numpy as np

        fig, (ax_y, ax_l) = plt.subplots(1, 2, figsize=(10, 4))
        for p in tr["plants"]:
            ax_y.plot(p["time_s"], p["y"], label=p["name"] or "nominal")
            ax_l.semilogx(tr["frequency_rad_s"], 20 * np.log10(np.abs(p["loop"])), label=p["name"] or "nominal")
        ax_y.set_xlabel("t (s)")
        ax_y.set_ylabel("azimuth (per unit of the step)")
        ax_l.set_xlabel("w (rad/s)")
        ax_l.set_ylabel("|L| (dB)")
        ax_y.legend()
        fig.tight_layout()
        out = os.path.join(tempfile.gettempdir(), "tracker_azimuth.png")
        fig.savefig(out, dpi=100)
        print("plots written to", out)
    except ImportError:
        print("(matplotlib is not installed: apt-get install python3-matplotlib to plot)")

# %% [markdown]
# ## Re-check, discretise and report
# The design's top compensator through `check`, then a 10 ms Tustin version re-verified, and
# the HTML report.

# %%
if result["candidates"]:
    top = result["candidates"][0]["compensator"]
    checked = polewright.check(spec, compensator={k: top[k] for k in ("gain", "zeros", "poles")})
    print("check:", checked["status"])
    discrete = polewright.export(result, rank=1, sample_time=0.01, method="tustin")
    print("discrete sections:", len(discrete["sections"]), "gain", discrete["gain"])
    page = os.path.join(tempfile.gettempdir(), "tracker_azimuth.html")
    polewright.report(result, page)
    print("report written to", page)

# %% [markdown]
# ## Bad input names the field

# %%
bad = json.loads(json.dumps(spec))
bad["plant"]["poles"][1] = "six"
try:
    polewright.check(bad, compensator={"gain": 1})
except polewright.SpecError as e:
    print("SpecError at", e.path, "-", e)
