#!/usr/bin/python3
"""Side-by-side PCA benchmark: clinal pca (whole process, out of core) vs
sklearn's randomized_svd(n_components=10, n_iter=4) in float32 on the same
standardized matrix held in memory (Debian python3-sklearn), one run, same
machine. Reports wall time, peak RSS and captured variance
trace(U^T K U) / M-normalized for both, judged by the same numpy code.
Also measures clinal's peak RSS at fixed N for two marker counts (memory
must not grow with M).

usage: benchmarks/pca/bench.py [--samples 5000] [--markers 50000] [--rounds 5] [--out DIR]
"""
import argparse, json, os, resource, statistics, subprocess, sys, time

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def run_child(cmd, **kw):
    """Run cmd, return (wall seconds, peak RSS bytes of the child)."""
    t0 = time.time()
    p = subprocess.Popen(cmd, **kw)
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.time() - t0
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"bench: {' '.join(cmd)} failed")
    return wall, ru.ru_maxrss * 1024


SKLEARN_CHILD = r'''
import sys, time, json, resource, numpy as np
from sklearn.utils.extmath import randomized_svd
z = np.load(sys.argv[1])            # (markers, samples) float32
a = z.T                              # samples x markers, as clinal's K side
t0 = time.time()
u, s, vt = randomized_svd(a, n_components=10, n_iter=4, random_state=0)
t = time.time() - t0
np.save(sys.argv[2], u.astype(np.float64))
print(json.dumps({"compute_seconds": t}))
'''

JUDGE = r'''
import sys, json, numpy as np, scipy.linalg as sl
z = np.load(sys.argv[1]).astype(np.float64)   # (M, N)
m = z.shape[0]
n = z.shape[1]
# The exact top-10 eigenvalues of K = Z^T Z / M (scipy eigh of the dense K),
# the ceiling of any captured variance.
k = (z.T @ z) / m
out = {"exact_top10": float(sl.eigh(k, eigvals_only=True, subset_by_index=[n - 10, n - 1]).sum())}
del k
for name, path in (("clinal", sys.argv[2]), ("sklearn", sys.argv[3])):
    if path.endswith(".npy"):
        u = np.load(path)
    else:
        u = np.loadtxt(path, skiprows=1, usecols=range(1, 11), delimiter="\t")
    q, _ = np.linalg.qr(u)                 # judge the subspace, orthonormal
    zu = z @ q
    out[name] = float((zu * zu).sum() / m)
print(json.dumps(out))
'''


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--samples", type=int, default=5000)
    ap.add_argument("--markers", type=int, default=50000)
    ap.add_argument("--out", default=os.path.join(ROOT, "bench-out", "pca"))
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--rounds", type=int, default=5, help="side-by-side rounds; medians are reported")
    args = ap.parse_args()
    os.makedirs(args.out, exist_ok=True)
    exe = os.path.join(args.out, "clinal")
    subprocess.check_call(["go", "build", "-o", exe, "./cmd/clinal"], cwd=ROOT)
    subprocess.check_call(["go", "build", "-o", os.path.join(args.out, "dumpz"), "./benchmarks/pca/dumpz"], cwd=ROOT)
    nofilter = ["--min-sample-call-rate", "0", "--min-marker-call-rate", "0", "--min-maf", "0",
                "--min-hwe-p", "0", "--chromosomes", "all", "--ld-r2", "0"]
    rows = []
    stores = {}
    for m in (args.markers // 10, args.markers):
        st = os.path.join(args.out, f"cohort_{args.samples}x{m}.clinal")
        if not os.path.exists(st):
            subprocess.check_call([exe, "simulate", "-o", st, "--samples", str(args.samples), "--markers", str(m),
                                   "--populations", "3", "--fst", "0.05", "--admixed", "0", "--seed", "1"])
        stores[m] = st
    # Each round runs clinal pca (whole process) at both sizes and sklearn
    # on the big one, back to back, so every round is a side-by-side
    # measurement; medians over the rounds damp a shared machine's noise.
    big = stores[args.markers]
    npy = os.path.join(args.out, "z.npy")
    subprocess.check_call([os.path.join(args.out, "dumpz"), big, npy])
    sk_u = os.path.join(args.out, "sklearn_u.npy")
    runs = {m: [] for m in stores}
    sk_runs = []
    for rnd in range(args.rounds):
        for m, st in stores.items():
            prefix = os.path.join(args.out, f"clinal_{m}")
            wall, rss = run_child([exe, "pca", st, "-k", "10", "-o", prefix, "--threads", str(args.threads)] + nofilter,
                                  stdout=subprocess.DEVNULL)
            rep = json.load(open(prefix + ".report.json"))
            runs[m].append((wall, rss, rep["passes"], rep["stop_reason"]))
        p = subprocess.Popen(["/usr/bin/python3", "-c", SKLEARN_CHILD, npy, sk_u], stdout=subprocess.PIPE)
        outb = p.stdout.read()
        _, status, ru = os.wait4(p.pid, 0)
        sk_runs.append((json.loads(outb)["compute_seconds"], ru.ru_maxrss * 1024))
        print(f"round {rnd + 1}: clinal {runs[args.markers][-1][0]:.3f} s, sklearn {sk_runs[-1][0]:.3f} s, "
              f"ratio {runs[args.markers][-1][0] / sk_runs[-1][0]:.3f}", flush=True)
    med = statistics.median
    rows = []
    for m in stores:
        w = [r[0] for r in runs[m]]
        rows.append({"tool": "clinal pca -k 10", "samples": args.samples, "markers": m, "wall_s": med(w),
                     "wall_min_s": min(w), "wall_max_s": max(w), "peak_rss_bytes": max(r[1] for r in runs[m]),
                     "peak_rss_median_bytes": med([r[1] for r in runs[m]]),
                     "passes": runs[m][-1][2], "stop": runs[m][-1][3]})
    w = [r[0] for r in sk_runs]
    rows.append({"tool": "sklearn randomized_svd f32 n_iter=4", "samples": args.samples, "markers": args.markers,
                 "wall_s": med(w), "wall_min_s": min(w), "wall_max_s": max(w),
                 "peak_rss_bytes": max(r[1] for r in sk_runs), "peak_rss_median_bytes": med([r[1] for r in sk_runs]),
                 "passes": "", "stop": "compute only"})
    ratios = [c[0] / s_[0] for c, s_ in zip(runs[args.markers], sk_runs)]
    judge = json.loads(subprocess.check_output(["/usr/bin/python3", "-c", JUDGE, npy,
                                                 os.path.join(args.out, f"clinal_{args.markers}.covariates.tsv"), sk_u]))
    rows[1]["captured_variance"] = judge["clinal"]
    rows[2]["captured_variance"] = judge["sklearn"]
    rows.append({"tool": "exact top-10 eigenvalue sum (scipy eigh of the dense K)", "samples": args.samples,
                 "markers": args.markers, "captured_variance": judge["exact_top10"]})
    os.remove(npy)
    path = os.path.join(ROOT, "benchmarks", "pca", "results.tsv")
    cols = ["tool", "samples", "markers", "wall_s", "wall_min_s", "wall_max_s", "peak_rss_bytes", "peak_rss_median_bytes",
            "passes", "stop", "captured_variance"]
    with open(path, "w") as f:
        f.write("\t".join(cols) + "\n")
        for r in rows:
            f.write("\t".join(str(r.get(c, "")) for c in cols) + "\n")
    print(open(path).read())
    c, s = rows[1], rows[2]
    print(f"clinal/sklearn wall, per round: {', '.join(f'{r:.2f}' for r in ratios)}; median {med(ratios):.2f}x")
    print(f"clinal/sklearn wall (medians): {c['wall_s'] / s['wall_s']:.2f}x; peak RSS: {c['peak_rss_bytes'] / s['peak_rss_bytes']:.3f}x;"
          f" captured variance {c['captured_variance']:.6f} vs {s['captured_variance']:.6f}"
          f" ({c['captured_variance'] / judge['exact_top10']:.4f} and {s['captured_variance'] / judge['exact_top10']:.4f} of exact)")
    print(f"clinal peak RSS at M={args.markers} vs M={args.markers // 10}: "
          f"{rows[1]['peak_rss_median_bytes'] / rows[0]['peak_rss_median_bytes']:.3f}x (medians of the rounds), "
          f"{rows[1]['peak_rss_bytes'] / rows[0]['peak_rss_bytes']:.3f}x (largest of each)")


if __name__ == "__main__":
    main()
