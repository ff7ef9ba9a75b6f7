#!/usr/bin/env python3
"""How wide a Krylov block should a pass after the first add? A model of
clinal's solver (randsvd.Solve) in numpy on a dense K, to compare block
widths by passes to the stop and captured variance.

The model: a Gaussian start block, Rayleigh-Ritz, then each pass adds the
residual block of the top b Ritz pairs (orthonormalized against the
basis), applies K to it, and keeps the best l pairs of the enlarged basis;
clinal starts with b columns too, the comparison ("b = l") with l; the stop is clinal's (every wanted pair's relative residual below
max(tol, 6e-7 theta_1 / theta_j), or the pairs above the Marchenko-Pastur
edge converged and the captured variance changed by less than 2e-3 in the
last pass). Exact arithmetic: no fast passes, no refinement pass.

Usage: benchmarks/pca/blockwidth.py STORE.clinal [STORE ...]
(needs python3-numpy and `go build -o DIR/dumpz ./benchmarks/pca/dumpz`;
each store's standardized matrix is written to a temporary .npy and K =
Z^T Z / M formed densely, so keep N to a few thousand.)
"""
import os, subprocess, sys, tempfile
import numpy as np

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def rr(b, kb, l):
    h = b.T @ kb
    th, v = np.linalg.eigh((h + h.T) / 2)
    idx = np.argsort(th)[::-1][:l]
    return b @ v[:, idx], kb @ v[:, idx], th[idx]


def solve(k_mat, m, k, b, seed, tol=1e-6, vartol=2e-3, maxp=30, floor=6e-7):
    n = k_mat.shape[0]
    l = min(k + max(10, k // 2), n)
    b = min(b, l)
    edge = np.trace(k_mat) / n * (1 + np.sqrt(n / m)) ** 2
    q, _ = np.linalg.qr(np.random.default_rng(seed).standard_normal((n, b)))
    u, ku, th = rr(q, k_mat @ q, l)
    width, prev = b, None
    for p in range(1, maxp + 1):
        rel = np.linalg.norm(ku - u * th, axis=0)[:k] / np.abs(th[:k])
        conv = rel <= np.maximum(tol, floor * th[0] / th[:k])
        cap = th[:k].sum()
        if conv.all() or (prev is not None and abs(cap - prev) <= vartol * cap
                          and all(conv[j] for j in range(k) if th[j] > edge)):
            return p, width, cap
        prev = cap
        r = (ku - u * th)[:, :b]
        for _ in range(2):
            r = r - u @ (u.T @ r)
        r, _ = np.linalg.qr(r)
        u, ku, th = rr(np.hstack([u, r]), np.hstack([ku, k_mat @ r]), l)
        width += b
    return maxp, width, th[:k].sum()


def build_dumpz():
    """Builds benchmarks/pca/dumpz into a temporary directory."""
    dumpz = os.path.join(tempfile.mkdtemp(), "dumpz")
    subprocess.check_call(["go", "build", "-o", dumpz, "./benchmarks/pca/dumpz"], cwd=ROOT)
    return dumpz


def dense_k(dumpz, store):
    """K = Z^T Z / M of a store (N x N, float64) and M."""
    with tempfile.TemporaryDirectory() as d:
        npy = os.path.join(d, "z.npy")
        subprocess.check_call([dumpz, store, npy], stdout=subprocess.DEVNULL)
        z = np.load(npy).astype(np.float64)
    m = z.shape[0]
    return (z.T @ z) / m, m


def main():
    dumpz = build_dumpz()
    for store in sys.argv[1:]:
        k_mat, m = dense_k(dumpz, store)
        ev = np.linalg.eigvalsh(k_mat)[::-1]
        print(f"{store}: N {k_mat.shape[0]}, M {m}, top eigenvalues {np.round(ev[:6], 3)}")
        for k in (1, 2, 5, 10, 20):
            l = k + max(10, k // 2)
            clinal_b = min(l, (max(k, (l + 1) // 2) + 3) // 4 * 4)
            cells = []
            for name, b in (("b = l", l), (f"b = {clinal_b} (clinal)", clinal_b)):
                runs = [solve(k_mat, m, k, b, s) for s in (1, 2, 3)]
                cells.append(f"{name}: " + ", ".join(
                    f"{p} passes, {w} vectors, {cap / ev[:k].sum():.5f}" for p, w, cap in runs))
            print(f"  k {k}, l {l}: " + " | ".join(cells))


if __name__ == "__main__":
    main()
