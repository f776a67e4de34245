#!/usr/bin/python3
"""SciPy counterpart of the default scenario's truth run, for the speed and accuracy comparison.

Reads the file written by `wayward_bench --export-truth=FILE` (initial barycentric state, GMs, span, our
run's wall times, energy error and end state, and a tighter reference run), integrates the same initial
state over the same span with scipy.integrate.solve_ivp(method="DOP853"), and prints both times, their
ratio, both relative energy errors, and the end-position differences (between the two runs and from the
reference). Units: au, day, au^3/d^2. Run through compare_scipy.sh, with /usr/bin/python3.
"""

import argparse
import json
import statistics
import sys
import time

import numpy as np
import scipy
from scipy.integrate import solve_ivp

KM_PER_AU = 149597870.7


def make_rhs(gm):
    """Newtonian N-body derivative of a 6-per-body state (x y z vx vy vz), vectorised with NumPy."""
    n = len(gm)

    def rhs(_t, y):
        s = y.reshape(n, 6)
        pos = s[:, :3]
        d = pos[np.newaxis, :, :] - pos[:, np.newaxis, :]  # d[i, j] = r_j - r_i
        r2 = np.einsum("ijk,ijk->ij", d, d)
        np.fill_diagonal(r2, 1.0)
        w = gm[np.newaxis, :] / (r2 * np.sqrt(r2))
        np.fill_diagonal(w, 0.0)
        out = np.empty_like(y)
        o = out.reshape(n, 6)
        o[:, :3] = s[:, 3:]
        o[:, 3:] = np.einsum("ijk,ij->ik", d, w)
        return out

    return rhs


def energies(gm, ys):
    """Total energy times G of each state (columns of ys): sum gm v^2 / 2 - sum_{i<j} gm_i gm_j / r_ij."""
    n = len(gm)
    s = ys.reshape(n, 6, -1)
    kinetic = 0.5 * np.einsum("i,ikt,ikt->t", gm, s[:, 3:, :], s[:, 3:, :])
    potential = np.zeros(ys.shape[1])
    for i in range(n):
        for j in range(i + 1, n):
            potential -= gm[i] * gm[j] / np.linalg.norm(s[i, :3, :] - s[j, :3, :], axis=0)
    return kinetic + potential


def position_differences(a, b):
    """Per-body distance (au) between the positions of two 6-per-body states."""
    return np.linalg.norm(a.reshape(-1, 6)[:, :3] - b.reshape(-1, 6)[:, :3], axis=1)


def time_offset(state, ref):
    """Split the end-position error from the reference into a common time offset dt (days, least squares over
    all bodies of d = dt * v) and the largest per-body remainder (au) once that offset is taken out."""
    s, r = state.reshape(-1, 6), ref.reshape(-1, 6)
    d, v = s[:, :3] - r[:, :3], r[:, 3:]
    dt = float(np.sum(d * v) / np.sum(v * v))
    return dt, float(np.linalg.norm(d - dt * v, axis=1).max())


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("truth", help="file written by wayward_bench --export-truth")
    ap.add_argument("--rtol", type=float, default=1e-12)
    ap.add_argument("--atol", type=float, default=None, help="default: our truth run's absolute tolerance")
    ap.add_argument("--repeats", type=int, default=1, help="timed SciPy runs (the median is compared)")
    args = ap.parse_args()

    with open(args.truth) as f:
        truth = json.load(f)
    gm = np.array(truth["gm"], dtype=float)
    y0 = np.array(truth["state0"], dtype=float)
    span = float(truth["span_days"])
    ours = truth["ours"]
    ref = truth["reference"]
    atol = args.atol if args.atol is not None else float(ours["abs_tol"])
    rhs = make_rhs(gm)

    wall, cpu = [], []
    sol = None
    for _ in range(max(1, args.repeats)):
        w0, c0 = time.perf_counter(), time.process_time()
        sol = solve_ivp(rhs, (0.0, span), y0, method="DOP853", rtol=args.rtol, atol=atol)
        wall.append(time.perf_counter() - w0)
        cpu.append(time.process_time() - c0)
        if not sol.success:
            print(f"solve_ivp failed: {sol.message}", file=sys.stderr)
            return 1
    end = sol.y[:, -1]
    e = energies(gm, sol.y)
    scipy_energy_end = abs(e[-1] - e[0]) / abs(e[0])
    scipy_energy_max = float(np.max(np.abs(e - e[0])) / abs(e[0]))

    ours_end = np.array(ours["end_state"], dtype=float)
    ref_end = np.array(ref["end_state"], dtype=float)
    d_between = position_differences(end, ours_end)
    d_ours_ref = position_differences(ours_end, ref_end)
    d_scipy_ref = position_differences(end, ref_end)

    ours_median = statistics.median(ours["seconds"])
    ours_cpu = statistics.median(ours["cpu_seconds"])
    scipy_median = statistics.median(wall)
    scipy_cpu = statistics.median(cpu)
    ratio = scipy_median / ours_median
    cpu_ratio = scipy_cpu / ours_cpu if ours_cpu > 0 else float("inf")
    names = truth["names"]
    years = span / 365.25

    print(f"Same initial state, {len(gm)} bodies, {years:.0f} years ({span:.0f} d); SciPy {scipy.__version__}, NumPy {np.__version__}")
    if ours["method"] == "gauss-radau":
        control = f"step precision {ours['step_precision']:.0e}, first step {ours['max_step_days']:.3f} d"
    else:
        control = f"rtol {ours['rel_tol']:.0e} atol {ours['abs_tol']:.0e}, step cap {ours['max_step_days']:.3f} d"
    print(f"  ours : {ours['method']} {control}, {ours['steps']} steps, {ours['rhs_calls']} rhs calls")
    print(f"         wall {ours_median:.4f} s (median of {len(ours['seconds'])}: "
          + ", ".join(f"{s:.4f}" for s in ours["seconds"]) + f"), process CPU {ours_cpu:.4f} s")
    print(f"  SciPy: DOP853 rtol {args.rtol:.0e} atol {atol:.0e}, {sol.t.size - 1} steps, {sol.nfev} rhs calls")
    print(f"         wall {scipy_median:.3f} s (median of {len(wall)}: " + ", ".join(f"{s:.3f}" for s in wall)
          + f"), process CPU {scipy_cpu:.3f} s")
    print(f"  time ratio SciPy / ours: {ratio:.1f}x wall, {cpu_ratio:.1f}x CPU")
    print("Relative energy error |E(end) - E(0)| / |E(0)| (largest over stored steps):")
    print(f"  ours : {ours['rel_energy_error']:.2e} ({ours['max_rel_energy_error']:.2e})")
    print(f"  SciPy: {scipy_energy_end:.2e} ({scipy_energy_max:.2e})")
    print(f"  reference ({ref['method']} {ref['step_days']:.3f} d, {ref['steps']} steps, {ref['seconds']:.1f} s): "
          f"{ref['rel_energy_error']:.2e}")
    print("End positions: distance between the runs, and of each from the reference (au):")
    print(f"  {'body':<12} {'ours-SciPy':>12} {'ours-ref':>12} {'SciPy-ref':>12}")
    for i, name in enumerate(names):
        print(f"  {name:<12} {d_between[i]:12.3e} {d_ours_ref[i]:12.3e} {d_scipy_ref[i]:12.3e}")
    print(f"  {'largest':<12} {d_between.max():12.3e} {d_ours_ref.max():12.3e} {d_scipy_ref.max():12.3e}"
          f"   ({d_between.max() * KM_PER_AU:.3g} / {d_ours_ref.max() * KM_PER_AU:.3g} / {d_scipy_ref.max() * KM_PER_AU:.3g} km)")

    print(f"  reference's own error, estimated against a run with {ref['self_check_step_days']:.3f} d steps: "
          f"{ref['self_check_distance']:.3e} au at most")

    for label, state in (("ours", ours_end), ("SciPy", end)):
        dt, rest = time_offset(state, ref_end)
        print(f"  {label:<5}: common time offset {dt:+.3e} d ({dt * 86400.0:+.4f} s); "
              f"largest remainder once it is removed {rest:.3e} au")
    closer = [names[i] for i in range(len(names)) if d_ours_ref[i] <= d_scipy_ref[i]]
    print(f"  bodies where ours is as close or closer to the reference: {', '.join(closer) if closer else 'none'}")

    faster = cpu_ratio >= 100.0
    as_accurate = ours["rel_energy_error"] <= scipy_energy_end and len(closer) == len(names)
    print(f"Goal (ours at least 100x faster in CPU time at equal or better accuracy): {cpu_ratio:.1f}x CPU -> "
          f"{'met' if faster else 'NOT met'} on speed; accuracy (energy error, and every body's distance from the "
          f"reference) {'equal or better' if as_accurate else 'WORSE'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
