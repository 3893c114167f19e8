#!/usr/bin/python3
"""Step figures of `polewright check` on the sampled loop (a spec with an implementation block)
against numpy/scipy.

    /usr/bin/python3 tests/reference/check_sampled_step.py POLEWRIGHT_BINARY

Loops: a plant with an integrator, a lightly damped mode (zeta 0.015 at 45 rad/s) and a dead time,
under a lead compensator discretised by Tustin (scipy.signal.cont2discrete, method "bilinear"),
sampled at T with the dead time a fraction of a sample, whole samples plus a computation delay, and
a fractional computation delay. The reference is a simulation of the hybrid loop written here: the
compensator's difference equation run at the instants kT on y(kT), its output held and delayed by the
dead time plus the computation delay, and the continuous plant driven by that held input on a fine
grid of T / 400 (exact zero-order hold of the plant at T / 400 by cont2discrete, the same as
scipy.signal.lsim with a piecewise-constant input, the input switching on the grid). From the fine output: overshoot (max y over y_final), settling time (last exit of the 2 % band,
interpolated on the fine grid). From the instants only: overshoot at the samples, and the same figure
from scipy.signal.dlsim of the closed discrete loop for whole-sample delays.

Tolerances: overshoot 0.02 percentage points (the fine grid's peak error is below (w dt)^2 / 2 of the
mode's amplitude, about 1e-6 here), settling time T / 200 (two fine steps). Prints "N passed, M failed".
"""
import json
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np
from scipy import signal

FINE = 400


def hybrid_step(num_g, den_g, num_c, den_c, T, delay_s, horizon_s):
    """Fine-grid step response of the hybrid loop: y(t) on t = i T / FINE and y at the instants.

    The compensator (Tustin by cont2discrete) runs at kT on y(kT); its output u[k] is held and
    reaches the plant delay_s = q T + s dt later (s < FINE), so inside interval k the plant input is
    u[k - q - 1] for the first s fine steps and u[k - q] after. The plant is advanced by its exact
    zero-order hold at dt = T / FINE (cont2discrete, method zoh), in closed form per interval:
    y_j = C Ad^j x0 + a C (G_j - G_max(j - s, 0)) + b C G_max(j - s, 0), G_m = sum_{r < m} Ad^r Bd.
    """
    cd_num, cd_den, _ = signal.cont2discrete((num_c, den_c), T, method="bilinear")
    cd_num = np.atleast_1d(np.squeeze(cd_num))
    cd_den = np.atleast_1d(np.squeeze(cd_den))
    A, B, C, D = signal.tf2ss(num_g, den_g)
    assert np.all(D == 0), "a strictly proper plant"
    dt = T / FINE
    Ad, Bd, _, _, _ = signal.cont2discrete((A, B, C, D), dt, method="zoh")
    steps = int(round(delay_s / dt))
    assert abs(steps * dt - delay_s) < 1e-9 * T, "the delay must fall on the fine grid"
    q, s = divmod(steps, FINE)
    nx = A.shape[0]
    P = np.zeros((FINE + 1, nx, nx))
    G = np.zeros((FINE + 1, nx))
    P[0] = np.eye(nx)
    for j in range(1, FINE + 1):
        P[j] = Ad @ P[j - 1]
        G[j] = G[j - 1] + (P[j - 1] @ Bd)[:, 0]
    CP = np.einsum("i,jik->jk", C[0], P)  # (FINE + 1, nx): C Ad^j
    CG = G @ C[0]                         # (FINE + 1,): C G_j
    jj = np.arange(FINE)
    lag = np.maximum(jj - s, 0)
    n = int(np.ceil(horizon_s / T)) + 1
    x = np.zeros(nx)
    e_hist = np.zeros(len(cd_num))
    u_hist = np.zeros(len(cd_den))
    u = []
    y_fine = []
    y_inst = []
    for k in range(n):
        y_k = float(C[0] @ x)
        e_hist = np.roll(e_hist, 1)
        e_hist[0] = 1.0 - y_k
        uk = (np.dot(cd_num, e_hist) - np.dot(cd_den[1:], u_hist[:-1])) / cd_den[0]
        u_hist = np.roll(u_hist, 1)
        u_hist[0] = uk
        u.append(uk)
        y_inst.append(y_k)
        a_in = u[k - q - 1] if k - q - 1 >= 0 else 0.0
        b_in = u[k - q] if k - q >= 0 else 0.0
        y_fine.append(CP[:FINE] @ x + a_in * (CG[:FINE] - CG[lag]) + b_in * CG[lag])
        x = P[FINE] @ x + a_in * (G[FINE] - G[FINE - s]) + b_in * G[FINE - s]
    y_fine = np.concatenate(y_fine)
    t_fine = np.arange(len(y_fine)) * dt
    return t_fine, y_fine, np.array(y_inst)


def figures(t, y, yf, band=0.02):
    os_pct = max(0.0, 100.0 * (np.max(y) - yf) / yf)
    out = np.nonzero(np.abs(y - yf) > band * abs(yf))[0]
    if len(out) == 0:
        return os_pct, 0.0
    i = out[-1]
    e0, e1 = abs(y[i] - yf), abs(y[i + 1] - yf)
    ts = t[i] + (e0 - band * yf) / (e0 - e1) * (t[i + 1] - t[i])
    return os_pct, ts


def dlsim_overshoot(num_g, den_g, num_c, den_c, T, delay_samples, horizon_s):
    """Overshoot at the instants from scipy.signal.dlsim of the closed discrete loop (whole delays)."""
    gd_num, gd_den, _ = signal.cont2discrete((num_g, den_g), T, method="zoh")
    cd_num, cd_den, _ = signal.cont2discrete((num_c, den_c), T, method="bilinear")
    L_num = np.polymul(np.squeeze(gd_num), np.squeeze(cd_num))
    L_den = np.polymul(np.polymul(np.squeeze(gd_den), np.squeeze(cd_den)), np.r_[1.0, np.zeros(delay_samples)])
    cl_den = np.polyadd(L_den, L_num)
    n = int(np.ceil(horizon_s / T)) + 1
    _, y = signal.dlsim((L_num, cl_den, T), np.ones(n))
    y = np.squeeze(y)
    return 100.0 * (np.max(y) - y[-1]) / y[-1]


def main():
    if len(sys.argv) < 2:
        sys.stderr.write("usage: check_sampled_step.py POLEWRIGHT_BINARY\n")
        return 2
    binary = sys.argv[1]
    # Plant 60000 / (s (s + 5) (s^2 + 1.35 s + 2025)): an integrator, a pole at 5 rad/s and a mode at
    # 45 rad/s with zeta = 0.015 (our own flexible-joint scenario).
    num_g = [60000.0]
    den_g = np.polymul([1.0, 5.0, 0.0], [1.0, 1.35, 2025.0])
    # Lead C(s) = 2 (s + 3) / (s + 6): about 10.7 % overshoot in continuous time without the delay.
    c_zpk = {"gain": 2.0, "zeros": [-3.0], "poles": [-6.0]}
    num_c = [2.0, 6.0]
    den_c = [1.0, 6.0]
    cases = [
        # (name, T, plant dead time, compute delay in samples)
        ("dead time 1.35 samples", 0.01, 0.0135, 0.0),
        ("dead time 2 samples + compute delay 1", 0.01, 0.02, 1.0),
        ("dead time 0.4 samples + compute delay 0.5", 0.02, 0.008, 0.5),
        # Sampled slowly for the 45 rad/s mode (1.8 rad per sample): the mode rings between the
        # instants, so the figures between them and at them differ clearly.
        ("slow sampling, dead time 0.25 samples", 0.04, 0.01, 0.0),
    ]
    passed = failed = 0

    def check(ok, name, detail):
        nonlocal passed, failed
        print(("ok   " if ok else "FAIL ") + name + ("" if ok else "  " + detail))
        passed += ok
        failed += not ok

    with tempfile.TemporaryDirectory() as tmp:
        for name, T, dead, d in cases:
            spec = {
                "name": "sampled reference: " + name,
                "plant": {"numerator": num_g, "denominator": list(map(float, den_g)), "delay_s": dead},
                "requirements": {"overshoot_pct": {"max": 90}, "settling_time_s": {"max": 100}},
                "current": c_zpk,
                "implementation": {"sample_time_s": T, "method": "tustin", "compute_delay_samples": d},
            }
            sp = Path(tmp) / "spec.json"
            out = Path(tmp) / "out.json"
            sp.write_text(json.dumps(spec))
            r = subprocess.run([binary, "check", str(sp), "-o", str(out)], stdout=subprocess.DEVNULL,
                               stderr=subprocess.PIPE, timeout=120)
            if r.returncode not in (0, 1) or not out.exists():
                check(False, name + ": check runs", r.stderr.decode())
                continue
            res = json.loads(out.read_text())
            m = res["variants"][0]["metrics"]
            at = res["sampled"]["loops"][0]["step_at_samples"]
            horizon = res["variants"][0]["step"]["horizon_s"]
            t, y, yk = hybrid_step(num_g, den_g, num_c, den_c, T, dead + d * T, horizon)
            yf = m["final_value"]
            os_ref, ts_ref = figures(t, y, yf)
            os_inst = max(0.0, 100.0 * (np.max(yk) - yf) / yf)
            check(abs(m["overshoot_pct"] - os_ref) <= 0.02, name + ": overshoot between samples",
                  "tool %.6g %%, scipy %.6g %%" % (m["overshoot_pct"], os_ref))
            check(abs(m["settling_time_s"] - ts_ref) <= T / 200, name + ": settling between samples",
                  "tool %.6g s, scipy %.6g s" % (m["settling_time_s"], ts_ref))
            check(abs(at["overshoot_pct"] - os_inst) <= 0.02, name + ": overshoot at the samples",
                  "tool %.6g %%, scipy %.6g %%" % (at["overshoot_pct"], os_inst))
            check(m["overshoot_pct"] >= at["overshoot_pct"] - 1e-9, name + ": between >= at the samples",
                  "%.6g < %.6g" % (m["overshoot_pct"], at["overshoot_pct"]))
            whole = (dead + d * T) / T
            if abs(whole - round(whole)) < 1e-9:
                os_dl = dlsim_overshoot(num_g, den_g, num_c, den_c, T, int(round(whole)), horizon)
                check(abs(at["overshoot_pct"] - os_dl) <= 0.02, name + ": overshoot at the samples vs dlsim",
                      "tool %.6g %%, dlsim %.6g %%" % (at["overshoot_pct"], os_dl))
            print("     %s: overshoot %.4f %% between samples (%.4f %% at them), settling %.5f s; differences from "
                  "scipy %.2g %%, %.2g s" % (name, m["overshoot_pct"], at["overshoot_pct"], m["settling_time_s"],
                                              m["overshoot_pct"] - os_ref, m["settling_time_s"] - ts_ref))
    print("%d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
