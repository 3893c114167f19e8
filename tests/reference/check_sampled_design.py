#!/usr/bin/python3
"""`polewright design` on a spec with an implementation block, its top candidate re-checked on the
sampled loop by numpy/scipy alone.

    /usr/bin/python3 tests/reference/check_sampled_design.py POLEWRIGHT_BINARY SPEC.json

The spec (examples/sampled/arm-joint.json: a flexible arm joint, lead + notch run by Tustin at 2 ms
with one sample of computation delay) must end met. The reference, independent of the tool:
  * step: the hybrid-loop simulation of check_sampled_step.py (the compensator discretised by
    scipy.signal.cont2discrete "bilinear", run at the instants, its output held and delayed, the
    continuous plant on a fine grid of T / 400 by its exact zero-order hold): overshoot and 2 %
    settling between the samples;
  * effort: the held control signal u[k] of the closed discrete loop by scipy.signal.dlsim (plant by
    cont2discrete "zoh", the computation delay as z^-d);
  * margins: L(e^jwT) = Cd Gd z^-d by scipy.signal.freqz on a dense grid up to Nyquist, the crossings
    refined by linear interpolation.
Checks: the candidate meets every requirement of the spec by the scipy figures, and the tool's
figures agree: overshoot 0.02 percentage points, settling T / 200, effort 1e-6 relative, margins
0.05 deg and 0.05 dB. Prints the figures and "N passed, M failed".
"""
import json
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy import signal

sys.path.insert(0, str(Path(__file__).resolve().parent))
from check_sampled_step import figures, hybrid_step  # noqa: E402


def poly_of_roots(roots):
    p = np.array([1.0])
    for r in roots:
        if isinstance(r, dict) and "wn" in r:
            p = np.polymul(p, [1.0, 2.0 * r["zeta"] * r["wn"], r["wn"] ** 2])
        elif isinstance(r, dict):
            re, im = r["re"], r["im"]
            p = np.polymul(p, [1.0, -2.0 * re, re * re + im * im])
        else:
            p = np.polymul(p, [1.0, -float(r)])
    return p


def compensator_tf(c):
    """num, den of k prod(s - z) / prod(s - p) from the result's zpk form (pairs written once)."""
    return c["gain"] * poly_of_roots(c["zeros"]), poly_of_roots(c["poles"])


def discrete_parts(num_g, den_g, num_c, den_c, T, d):
    gd_num, gd_den, _ = signal.cont2discrete((num_g, den_g), T, method="zoh")
    cd_num, cd_den, _ = signal.cont2discrete((num_c, den_c), T, method="bilinear")
    gd_num, gd_den = np.trim_zeros(np.squeeze(gd_num), "f"), np.squeeze(gd_den)
    cd_num, cd_den = np.atleast_1d(np.squeeze(cd_num)), np.atleast_1d(np.squeeze(cd_den))
    zd = np.r_[1.0, np.zeros(d)]  # z^d in the denominator
    L_num = np.polymul(gd_num, cd_num)
    L_den = np.polymul(np.polymul(gd_den, cd_den), zd)
    return cd_num, cd_den, gd_num, gd_den, zd, L_num, L_den


def margins(L_num, L_den, T):
    w = np.geomspace(1e-3, np.pi / T * (1 - 1e-9), 400000)
    # freqz reads both arrays as polynomials in z^-1: pad the numerator to the denominator's length
    # so that they stay N(z) / D(z).
    b = np.r_[np.zeros(len(L_den) - len(L_num)), L_num]
    _, L = signal.freqz(b, L_den, worN=w * T)
    mag = np.abs(L)
    pms = []
    for i in np.nonzero(np.diff(np.sign(mag - 1.0)) != 0)[0]:
        f = (1.0 - mag[i]) / (mag[i + 1] - mag[i])
        ph = np.angle(L[i] + f * (L[i + 1] - L[i]), deg=True)
        pms.append(180.0 + ph if ph <= 0 else ph - 180.0)
    gms = []
    im = L.imag
    for i in np.nonzero(np.diff(np.sign(im)) != 0)[0]:
        f = -im[i] / (im[i + 1] - im[i])
        re = L[i].real + f * (L[i + 1].real - L[i].real)
        if re < 0:
            gms.append(-20.0 * np.log10(-re))
    return min(pms) if pms else np.inf, min([g for g in gms if g > 0], default=np.inf)


def main():
    if len(sys.argv) < 3:
        sys.stderr.write("usage: check_sampled_design.py POLEWRIGHT_BINARY SPEC.json\n")
        return 2
    binary, spec_path = sys.argv[1], sys.argv[2]
    spec = json.loads(Path(spec_path).read_text())
    im = spec["implementation"]
    assert im.get("method", "tustin") == "tustin", "the reference discretises by Tustin"
    T, d = im["sample_time_s"], int(im.get("compute_delay_samples", 0))
    assert d == im.get("compute_delay_samples", 0), "a whole number of samples of delay"
    plant = spec["plant"]
    num_g = [float(plant["gain"])] if "gain" in plant else plant["numerator"]
    den_g = poly_of_roots(plant["poles"]) if "poles" in plant else plant["denominator"]
    assert plant.get("delay_s", 0.0) == 0.0
    req = spec["requirements"]
    passed = failed = 0

    def check(ok, name, detail=""):
        nonlocal passed, failed
        print(("ok   " if ok else "FAIL ") + name + ("" if ok else "  " + detail))
        passed += ok
        failed += not ok

    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "design.json"
        r = subprocess.run([binary, "design", spec_path, "-o", str(out)], stdout=subprocess.DEVNULL,
                           stderr=subprocess.PIPE, timeout=600)
        if not out.exists():
            check(False, "design runs", r.stderr.decode())
            print("%d passed, %d failed" % (passed, failed))
            return 1
        res = json.loads(out.read_text())
    check(res["status"] == "met", "design ends met", res["status"])
    check(res.get("implementation", {}).get("label", "").startswith("sampled at T = %g s" % T),
          "the result says the figures are of the sampled loop")
    top = res["candidates"][0]
    m = top["metrics"]
    num_c, den_c = compensator_tf(top["compensator"])
    cd_num, cd_den, gd_num, gd_den, zd, L_num, L_den = discrete_parts(num_g, den_g, num_c, den_c, T, d)

    horizon = 3.0 * req["settling_time_s"]["max"]
    t, y, _ = hybrid_step(num_g, den_g, num_c, den_c, T, d * T, horizon)
    os_ref, ts_ref = figures(t, y, 1.0, req["settling_time_s"].get("band_pct", 2) / 100.0)
    n = int(np.ceil(horizon / T)) + 1
    u_num = np.polymul(np.polymul(cd_num, gd_den), zd)
    u_den = np.polyadd(L_den, L_num)
    _, u = signal.dlsim((u_num, u_den, T), np.ones(n))
    effort_ref = float(np.max(np.abs(u)))
    pm_ref, gm_ref = margins(L_num, L_den, T)
    cl_poles = np.roots(np.polyadd(L_den, L_num))
    check(np.max(np.abs(cl_poles)) < 1.0, "closed discrete loop stable (scipy)", str(np.max(np.abs(cl_poles))))

    check(os_ref <= req["overshoot_pct"]["max"], "overshoot between samples meets (scipy)", "%.4g %%" % os_ref)
    check(ts_ref <= req["settling_time_s"]["max"], "settling meets (scipy)", "%.5g s" % ts_ref)
    check(effort_ref <= req["peak_effort"]["max"], "peak effort meets (scipy)", "%.5g" % effort_ref)
    check(pm_ref >= req["phase_margin_deg"]["min"], "phase margin meets (scipy)", "%.4g deg" % pm_ref)
    check(gm_ref >= req["gain_margin_db"]["min"], "gain margin meets (scipy)", "%.4g dB" % gm_ref)
    check(abs(m["overshoot_pct"] - os_ref) <= 0.02, "overshoot agrees", "tool %.6g, scipy %.6g" % (m["overshoot_pct"], os_ref))
    check(abs(m["settling_time_s"] - ts_ref) <= T / 200, "settling agrees",
          "tool %.6g, scipy %.6g" % (m["settling_time_s"], ts_ref))
    check(abs(m["peak_effort"] - effort_ref) <= 1e-6 * effort_ref, "peak effort agrees",
          "tool %.8g, scipy %.8g" % (m["peak_effort"], effort_ref))
    check(abs(m["phase_margin_deg"] - pm_ref) <= 0.05, "phase margin agrees",
          "tool %.6g, scipy %.6g" % (m["phase_margin_deg"], pm_ref))
    check(abs(m["gain_margin_db"] - gm_ref) <= 0.05, "gain margin agrees", "tool %.6g, scipy %.6g" % (m["gain_margin_db"], gm_ref))
    print("     sampled loop of rank 1 (%s): overshoot %.4f %% (scipy %.4f), settling %.5f s (scipy %.5f), effort %.5g "
          "(scipy %.5g), PM %.3f deg (scipy %.3f), GM %.3f dB (scipy %.3f); continuous: %s"
          % ("+".join(top["structure"]), m["overshoot_pct"], os_ref, m["settling_time_s"], ts_ref, m["peak_effort"],
             effort_ref, m["phase_margin_deg"], pm_ref, m["gain_margin_db"], gm_ref,
             "meets" if top.get("continuous", {}).get("meets") else "misses"))
    print("%d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
