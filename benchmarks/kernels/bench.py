#!/usr/bin/python3
"""Pass benchmark: one pass of clinal (K X from the compressed 2-bit store,
exact and fast) against numpy's two float32 products on the same
standardized matrix held in memory (Debian python3-numpy with OpenBLAS),
in one run on one machine, with the floors under each:

- clinal: `passbench` (this folder) times a pass with 1 and 2 threads, with
  1 thread pinned to one core (sched_setaffinity, GOMAXPROCS=1: decoding
  shares that core), and a stream-only pass that reads and decompresses every chunk and computes
  nothing: no pass from this store can be faster;
- numpy: W = Z X and Y = Z^T W in float32 (Z markers x samples, X samples x
  l), and the memory floor: two reads of Z at the bandwidth numpy's own
  float32 sum over Z reaches here.

Also reports allocations per pass (steady state) and the speed-ups from 1
to 2 threads and from 1 to 2 cores. A pass is 4*N*M*l flops of dense arithmetic (design.md).

usage: benchmarks/kernels/bench.py [--samples 5000] [--markers 50000] [--l 20] [--rounds 5]
"""
import argparse, json, os, statistics, subprocess, sys

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

NUMPY_CHILD = r'''
import sys, time, json, numpy as np
z = np.load(sys.argv[1])                  # (M, N) float32, C order
l, reps = int(sys.argv[2]), int(sys.argv[3])
m, n = z.shape
rng = np.random.default_rng(1)
x = rng.standard_normal((n, l)).astype(np.float32)
def timed(f):
    f()
    ts = []
    for _ in range(reps):
        t0 = time.perf_counter(); f(); ts.append(time.perf_counter() - t0)
    return sorted(ts)[len(ts) // 2]
def one_pass():
    w = z @ x
    y = z.T @ w
    return y
pass_s = timed(one_pass)
sum_s = timed(lambda: z.sum(dtype=np.float32))
print(json.dumps({"pass_seconds": pass_s, "read_seconds": sum_s, "bytes": z.nbytes,
                  "floor_seconds": 2 * sum_s}))
'''


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--samples", type=int, default=5000)
    ap.add_argument("--markers", type=int, default=50000)
    ap.add_argument("--l", type=int, default=20)
    ap.add_argument("--reps", type=int, default=5)
    ap.add_argument("--rounds", type=int, default=5, help="side-by-side rounds; medians are reported")
    ap.add_argument("--out", default=os.path.join(ROOT, "bench-out", "kernels"))
    args = ap.parse_args()
    os.makedirs(args.out, exist_ok=True)
    exe = os.path.join(args.out, "clinal")
    for pkg, name in (("./cmd/clinal", "clinal"), ("./benchmarks/kernels/passbench", "passbench"),
                      ("./benchmarks/pca/dumpz", "dumpz")):
        subprocess.check_call(["go", "build", "-o", os.path.join(args.out, name), pkg], cwd=ROOT)
    st = os.path.join(args.out, f"cohort_{args.samples}x{args.markers}.clinal")
    if not os.path.exists(st):
        subprocess.check_call([exe, "simulate", "-o", st, "--samples", str(args.samples), "--markers",
                               str(args.markers), "--populations", "3", "--fst", "0.05", "--admixed", "0", "--seed", "1"])
    npy = os.path.join(args.out, "z.npy")
    if not os.path.exists(npy):
        subprocess.check_call([os.path.join(args.out, "dumpz"), st, npy])
    # Rounds: clinal (1 and 2 threads) then numpy, back to back, so each
    # round is a side-by-side measurement; medians over rounds damp a
    # shared machine's noise.
    env = dict(os.environ, OPENBLAS_NUM_THREADS="2")
    # The 1-core run is pinned to the first CPU this process may use.
    cpus = sorted(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else []  # Linux
    one_core = cpus[0] if len(cpus) >= 2 else None
    if one_core is None:
        print("bench: no CPU affinity or fewer than two CPUs: no 1-core rows", file=sys.stderr)
    rounds = []
    for rnd in range(args.rounds):
        res = {}
        for th in (1, 2):
            out = subprocess.check_output([os.path.join(args.out, "passbench"), "-l", str(args.l), "-threads", str(th),
                                           "-reps", str(args.reps), st])
            res[f"clinal_t{th}"] = json.loads(out)
        # One core: the 1-thread pass pinned to one CPU with one Go
        # scheduler thread (GOMAXPROCS=1), so decoding cannot run beside
        # it on the other core. 1 core -> 2 cores is the pass's parallel
        # speed-up; 1 -> 2 threads also counts the decoder's use of the
        # second core by the 1-thread pass.
        if one_core is not None:
            out = subprocess.check_output([os.path.join(args.out, "passbench"), "-l", str(args.l),
                                           "-threads", "1", "-reps", str(args.reps), st],
                                          env=dict(os.environ, GOMAXPROCS="1"),
                                          preexec_fn=lambda: os.sched_setaffinity(0, {one_core}))
            res["clinal_c1"] = json.loads(out)
        res["numpy"] = json.loads(subprocess.check_output(["/usr/bin/python3", "-c", NUMPY_CHILD, npy, str(args.l),
                                                           str(args.reps)], env=env))
        rounds.append(res)
        print(f"round {rnd + 1}: fast pass {res['clinal_t2']['FastSeconds']:.4f} s, numpy {res['numpy']['pass_seconds']:.4f} s, "
              f"ratio {res['clinal_t2']['FastSeconds'] / res['numpy']['pass_seconds']:.3f}", flush=True)
    med = statistics.median

    def m(key, field):
        return med([r[key][field] for r in rounds])
    c2 = rounds[0]["clinal_t2"]
    flops = 4.0 * c2["Samples"] * c2["Markers"] * args.l
    rows = [
        ("clinal fast pass, 2 threads", m("clinal_t2", "FastSeconds")),
        ("clinal exact pass, 2 threads", m("clinal_t2", "ExactSeconds")),
        ("clinal fast pass, 1 thread", m("clinal_t1", "FastSeconds")),
        ("clinal exact pass, 1 thread", m("clinal_t1", "ExactSeconds")),
    ]
    if one_core is not None:
        rows += [
            ("clinal fast pass, 1 thread on 1 core", m("clinal_c1", "FastSeconds")),
            ("clinal exact pass, 1 thread on 1 core", m("clinal_c1", "ExactSeconds")),
        ]
    rows += [
        ("clinal stream-only (read + zstd), 2 threads", m("clinal_t2", "StreamSeconds")),
        ("numpy float32 Z X and Z^T W (OpenBLAS, 2 threads)", m("numpy", "pass_seconds")),
        ("numpy memory floor (2 reads of Z)", m("numpy", "floor_seconds")),
    ]
    lines = ["what\tseconds (median of rounds)\tGFLOP/s-equiv\tGgeno/s"]
    for name, sec in rows:
        lines.append(f"{name}\t{sec:.4f}\t{flops / sec / 1e9:.1f}\t{c2['Samples'] * c2['Markers'] / sec / 1e9:.2f}")
    path = os.path.join(ROOT, "benchmarks", "kernels", "results.tsv")
    with open(path, "w") as f:
        f.write("\n".join(lines) + "\n")
    print("\n".join(lines))
    ratio = lambda r, kind: r["clinal_t2"][kind] / r["numpy"]["pass_seconds"]
    speed = lambda r, kind: r["clinal_t1"][kind] / r["clinal_t2"][kind]
    print(f"\n{c2['Samples']} x {c2['Markers']}, l = {args.l}, {args.rounds} rounds")
    fast = [ratio(r, "FastSeconds") for r in rounds]
    exact = [ratio(r, "ExactSeconds") for r in rounds]
    per = ", ".join(f"{x:.2f}" for x in fast)
    print(f"clinal fast pass / numpy pass, per round: {per}; median {med(fast):.2f}x; exact: median {med(exact):.2f}x")
    print(f"speed-up 1 -> 2 threads, median of rounds: fast {med([speed(r, 'FastSeconds') for r in rounds]):.2f}x, "
          f"exact {med([speed(r, 'ExactSeconds') for r in rounds]):.2f}x")
    if one_core is not None:
        cores = lambda r, kind: r["clinal_c1"][kind] / r["clinal_t2"][kind]
        per = ", ".join(f"{cores(r, 'FastSeconds'):.2f}" for r in rounds)
        print(f"speed-up 1 -> 2 cores (1 thread pinned to one core vs 2 threads on two), per round: fast {per}; "
              f"median fast {med([cores(r, 'FastSeconds') for r in rounds]):.2f}x, "
              f"exact {med([cores(r, 'ExactSeconds') for r in rounds]):.2f}x")
    # Cores busy during the timed passes (CPU time / wall time): the zstd
    # decoder runs beside the compute threads, so the 1-thread pass already
    # keeps more than one core busy and bounds the 2-thread speed-up at
    # 2 / (its cores busy).
    print(f"cores busy (CPU time / wall), median of rounds: fast 1 thread {m('clinal_t1', 'FastCores'):.2f}, "
          f"2 threads {m('clinal_t2', 'FastCores'):.2f}; exact 1 thread {m('clinal_t1', 'ExactCores'):.2f}, "
          f"2 threads {m('clinal_t2', 'ExactCores'):.2f}")
    print(f"allocations per pass (2 threads): fast {c2['FastAllocs']:.0f} ({c2['FastBytes'] / 1024:.0f} KiB), "
          f"exact {c2['ExactAllocs']:.0f} ({c2['ExactBytes'] / 1024:.0f} KiB)")
    res = {"rounds": rounds}
    json.dump(res, open(os.path.join(args.out, "raw.json"), "w"), indent=1)


if __name__ == "__main__":
    main()
