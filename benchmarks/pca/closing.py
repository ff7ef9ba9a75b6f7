#!/usr/bin/env python3
"""Closing passes: can the solver foresee its last pass? A model of
clinal's solver (randsvd.Solve) in numpy on a dense K, to check the
predictor that turns the last fast pass and the refinement after it into
one exact "closing" pass (randsvd.predictLast, closingWidth).

The model iterates as blockwidth.py does (a Gaussian start block of b
columns, then the residual block of the top b Ritz pairs each pass, thick
restart at l; exact arithmetic) and records, after every pass, the
stopping tests (clinal's: every wanted pair's relative residual below
max(tol, 6e-7 theta_1 / theta_j) while passes are fast, or the pairs above
the Marchenko-Pastur edge converged and the captured variance changed by
less than 2e-3) and what a closing pass from that state would give:
Rayleigh-Ritz on [U_K R_c] (R_c the residuals of the top c = w - K pairs,
w = min(K + b, l)) and its tests (clinal's, on Rayleigh-Ritz on [U R_c]
as after a fast pass, then strictly on span C against that captured
variance). It then
replays two schemes on the same sequence:

  before: fast passes until the tests pass, then a refinement (an exact
          pass of width K);
  closing: at each state predictLast's extrapolation decides whether the
          next pass is a closing one (exact, width w); the run ends there
          if its tests pass, else the iteration goes on (a wrong guess:
          modelled as the ordinary next state, where the solver goes on
          from [U R_c], or refines when only the span-C test failed; no
          recorded run had one); unforeseen stops still get the
          refinement.

It prints, per store, k and seed: passes, wrong guesses, the captured
variance at the stop as a fraction of the exact top-k sum, and a cost in
seconds from the pass times passbench measured at 5,000 samples x 50,000
markers, 2 threads (fast 0.09 + 0.0037 w s, exact 0.10 + 0.0053 w s for
width w: fits to widths 10-32, 2026-12-02); and totals.

Usage: benchmarks/pca/closing.py STORE.clinal [STORE ...]
(needs python3-numpy; see blockwidth.py for dumpz and sizes.)
"""
import sys
import numpy as np

from blockwidth import build_dumpz, dense_k, rr  # same folder

TOL, FLOOR, VARTOL = 1e-6, 6e-7, 2e-3


def fast_cost(w):
    return 0.09 + 0.0037 * w


def exact_cost(w):
    return 0.10 + 0.0053 * w


def orth(r, u):
    for _ in range(2):
        r = r - u @ (u.T @ r)
    return np.linalg.qr(r)[0]


def tests(u, ku, th, k, prev, edge, floor):
    rel = np.linalg.norm(ku - u * th, axis=0)[:k] / np.abs(th[:k])
    conv = rel <= np.maximum(TOL, floor * th[0] / th[:k])
    cap = th[:k].sum()
    stop = bool(conv.all() or (prev is not None and abs(cap - prev) <= VARTOL * cap
                               and all(conv[j] for j in range(k) if th[j] > edge)))
    return stop, cap, rel


def trace(k_mat, m, k, seed, maxp=30):
    """The states of the iteration, with what a closing pass would give."""
    n = k_mat.shape[0]
    l = min(k + max(10, k // 2), n)
    b = min(l, (max(k, (l + 1) // 2) + 3) // 4 * 4)
    w = min(k + b, l)
    edge = np.trace(k_mat) / n * (1 + np.sqrt(n / m)) ** 2
    q, _ = np.linalg.qr(np.random.default_rng(seed).standard_normal((n, b)))
    u, ku, th = rr(q, k_mat @ q, l)
    prev, states = None, []
    for p in range(1, maxp + 1):
        stop, cap, rel = tests(u, ku, th, k, prev, edge, FLOOR)
        s = dict(stop=stop, cap=cap, rel=rel, th=th[:k].copy(), prev=prev)
        states.append(s)
        if stop:
            break
        res = ku - u * th
        rc = orth(res[:, :w - k], u)
        c = np.hstack([u[:, :k], rc])
        kc = k_mat @ c
        uc, kuc, thc = rr(c, kc, w)
        # The closing pass's tests: first on [U R_c] as after a fast pass,
        # then strictly on span C against that captured variance.
        uf, kuf, thf = rr(np.hstack([u, rc]), np.hstack([ku, kc[:, k:]]), l)
        fstop, fcap, _ = tests(uf, kuf, thf, k, cap, edge, FLOOR)
        cstop, ccap, _ = tests(uc, kuc, thc, k, fcap, edge, 0.0)
        s["closing_stops"], s["closing_cap"] = fstop and cstop, ccap
        prev = cap
        r = orth(res[:, :b], u)
        u, ku, th = rr(np.hstack([u, r]), np.hstack([ku, k_mat @ r]), l)
    return dict(k=k, l=l, b=b, w=w, edge=edge, states=states)


def predict_last(states, p, k, edge):
    """predictLast on state p (1-based), the states before it known."""
    if p < 2:
        return False
    s, sp = states[p - 1], states[p - 2]
    th, rel, prel = s["th"], s["rel"], sp["rel"]
    spread = lambda r: float(np.sum(np.maximum(th, 0) * r * r))
    kappa = 4.0
    if p >= 3 and spread(prel) > 0:
        kappa = min(4.0, max(1.0, (s["cap"] - sp["cap"]) / spread(prel)))
    ratio = np.minimum(1.0, rel / np.where(prel > 0, prel, np.inf))
    ratio = np.where(prel > 0, ratio, 1.0)
    conv = 2 * rel * ratio <= TOL
    if conv.all():
        return True
    return bool(conv[th > edge].all() and kappa * spread(rel) <= VARTOL * s["cap"])


def replay(t, closing):
    k, b, w, st = t["k"], t["b"], t["w"], t["states"]
    cost, passes, wrong = fast_cost(b), 1, 0
    for p in range(1, len(st) + 1):
        s = st[p - 1]
        if s["stop"]:
            return cost + exact_cost(k), passes + 1, wrong, s["cap"], "refinement"
        if closing and predict_last(st, p, k, t["edge"]):
            cost, passes = cost + exact_cost(w), passes + 1
            if s["closing_stops"]:
                return cost, passes, wrong, s["closing_cap"], "closing"
            wrong += 1
        else:
            cost, passes = cost + fast_cost(b), passes + 1
    return cost, passes, wrong, st[-1]["cap"], "max-passes"


def main():
    dumpz = build_dumpz()
    tot = {"runs": 0, "foreseen": 0, "wrong": 0, "before": 0.0, "closing": 0.0, "worse": 0}
    for store in sys.argv[1:]:
        k_mat, m = dense_k(dumpz, store)
        ev = np.linalg.eigvalsh(k_mat)[::-1]
        print(f"{store}: N {k_mat.shape[0]}, M {m}")
        for k in (1, 2, 5, 10, 20):
            for seed in (1, 2, 3):
                t = trace(k_mat, m, k, seed)
                if t["states"][-1]["stop"] is False:
                    print(f"  k {k} seed {seed}: 30-pass cap, left out")
                    continue
                c0, p0, _, cap0, _ = replay(t, False)
                c1, p1, wrong, cap1, how = replay(t, True)
                ex = ev[:k].sum()
                tot["runs"] += 1
                tot["foreseen"] += how == "closing"
                tot["wrong"] += wrong
                tot["before"] += c0
                tot["closing"] += c1
                tot["worse"] += c1 > c0 + 1e-9
                print(f"  k {k} seed {seed}: before {p0} passes {c0:.3f} s captured {cap0 / ex:.5f} | "
                      f"closing {p1} passes ({how}, {wrong} wrong) {c1:.3f} s captured {cap1 / ex:.5f} | {c1 / c0:.3f}x")
    print(f"runs {tot['runs']}: last pass foreseen in {tot['foreseen']}, wrong guesses {tot['wrong']}, "
          f"costlier than before in {tot['worse']}; cost in all {tot['closing'] / tot['before']:.3f}x")


if __name__ == "__main__":
    main()
