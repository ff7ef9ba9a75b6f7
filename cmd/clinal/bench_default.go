package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T11:58:24Z",
  "machine": {
    "cpu": "AMD EPYC",
    "cpus": 2,
    "arch": "amd64",
    "go": "go1.26.8",
    "clinal_version": "0.1.0-dev"
  },
  "k": 10,
  "oversample": 0,
  "threads": 2,
  "passes_range": [
    6,
    9
  ],
  "pca_flags": [
    "--tw",
    "approx",
    "--no-resume"
  ],
  "memory": {
    "formula": "peak_rss_bytes = a + b_s * solver + b_o * other + b_t * tables (parts of randsvd.PlanMemory's budget)",
    "terms": [
      "1",
      "solver_bytes",
      "other_bytes",
      "table_bytes"
    ],
    "coefficients": [
      2763006.2832456166,
      1.7800898415156297,
      0.49283128022305545,
      0.4680295410277142
    ],
    "max_relative_residual": 0.05159901932779698,
    "leave_one_out_max_relative_error": 0.08375709267956988,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 55275520,
      "predicted": 55100738.98030465,
      "relative_error": -0.0031619968422793576
    }
  },
  "wall": {
    "formula": "wall_seconds = c0 + c_pass * N*M*l*passes/threads + c_once * N*M/threads + c_mk * M + c_n * N (l = k + oversample)",
    "terms": [
      "1",
      "N*M*l*passes/threads",
      "N*M/threads",
      "M",
      "N"
    ],
    "coefficients": [
      0.10659626571760848,
      7.930980445843385e-11,
      7.834434187075502e-9,
      0.000005588820959798713,
      0.000009452593175374769
    ],
    "max_relative_residual": 0.24006602609848948,
    "leave_one_out_max_relative_error": 0.2606314565421064,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.068936568,
      "predicted": 3.4532139406564375,
      "relative_error": 0.12521515650187198
    }
  },
  "cpu": {
    "formula": "cpu_seconds = d0 + d_pass * N*M*l*passes + d_once * N*M + d_mk * M + d_n * N",
    "terms": [
      "1",
      "N*M*l*passes",
      "N*M",
      "M",
      "N"
    ],
    "coefficients": [
      0.14877978983183407,
      7.213765850089399e-11,
      6.051459035197183e-9,
      0.000007472352834823013,
      0.000016896815622295948
    ],
    "max_relative_residual": 0.19439985710175967,
    "leave_one_out_max_relative_error": 0.20799827051621644,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 5.096666,
      "predicted": 5.618932161411652,
      "relative_error": 0.10247211832434222
    }
  },
  "points": [
    {
      "samples": 1000,
      "markers": 10000,
      "samples_used": 990,
      "markers_used": 9930,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.258145531,
      "pca_cpu_seconds": 0.399136,
      "solve_wall_seconds": 0.096090554,
      "solve_cpu_seconds": 0.14690200000000003,
      "pca_peak_rss_bytes": 41287680,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 3096000,
        "other_bytes": 68757507
      }
    },
    {
      "samples": 1000,
      "markers": 20000,
      "samples_used": 990,
      "markers_used": 19876,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.411281233,
      "pca_cpu_seconds": 0.636033,
      "solve_wall_seconds": 0.159761289,
      "solve_cpu_seconds": 0.27092700000000003,
      "pca_peak_rss_bytes": 41164800,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 6096000,
        "other_bytes": 68757507
      }
    },
    {
      "samples": 1000,
      "markers": 40000,
      "samples_used": 990,
      "markers_used": 39753,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.674033433,
      "pca_cpu_seconds": 1.035924,
      "solve_wall_seconds": 0.243232048,
      "solve_cpu_seconds": 0.402873,
      "pca_peak_rss_bytes": 45023232,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 12096000,
        "other_bytes": 68774487
      }
    },
    {
      "samples": 1000,
      "markers": 80000,
      "samples_used": 990,
      "markers_used": 79514,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.296765326,
      "pca_cpu_seconds": 1.9803739999999999,
      "solve_wall_seconds": 0.462329629,
      "solve_cpu_seconds": 0.7986239999999999,
      "pca_peak_rss_bytes": 49602560,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 24096000,
        "other_bytes": 68774487
      }
    },
    {
      "samples": 2000,
      "markers": 10000,
      "samples_used": 1980,
      "markers_used": 9773,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.360793514,
      "pca_cpu_seconds": 0.56133,
      "solve_wall_seconds": 0.160146056,
      "solve_cpu_seconds": 0.248059,
      "pca_peak_rss_bytes": 39137280,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 3192000,
        "other_bytes": 63633623
      }
    },
    {
      "samples": 2000,
      "markers": 20000,
      "samples_used": 1980,
      "markers_used": 19591,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.569183495,
      "pca_cpu_seconds": 0.89959,
      "solve_wall_seconds": 0.230582801,
      "solve_cpu_seconds": 0.3844000000000001,
      "pca_peak_rss_bytes": 42094592,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 6192000,
        "other_bytes": 63640610
      }
    },
    {
      "samples": 2000,
      "markers": 40000,
      "samples_used": 1980,
      "markers_used": 39203,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.0325539479999999,
      "pca_cpu_seconds": 1.6438119999999998,
      "solve_wall_seconds": 0.435180462,
      "solve_cpu_seconds": 0.7472660000000001,
      "pca_peak_rss_bytes": 43737088,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 12192000,
        "other_bytes": 63650756
      }
    },
    {
      "samples": 2000,
      "markers": 80000,
      "samples_used": 1980,
      "markers_used": 78384,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.918084745,
      "pca_cpu_seconds": 3.030067,
      "solve_wall_seconds": 0.755018796,
      "solve_cpu_seconds": 1.3280050000000003,
      "pca_peak_rss_bytes": 51011584,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 24192000,
        "other_bytes": 63650756
      }
    },
    {
      "samples": 4000,
      "markers": 10000,
      "samples_used": 3960,
      "markers_used": 9191,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.626546267,
      "pca_cpu_seconds": 1.004541,
      "solve_wall_seconds": 0.306423577,
      "solve_cpu_seconds": 0.5013110000000001,
      "pca_peak_rss_bytes": 44789760,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 64610593
      }
    },
    {
      "samples": 4000,
      "markers": 20000,
      "samples_used": 3960,
      "markers_used": 18430,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.897417503,
      "pca_cpu_seconds": 1.445807,
      "solve_wall_seconds": 0.375277081,
      "solve_cpu_seconds": 0.6614590000000001,
      "pca_peak_rss_bytes": 46227456,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 64615291
      }
    },
    {
      "samples": 4000,
      "markers": 40000,
      "samples_used": 3960,
      "markers_used": 36827,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.654024191,
      "pca_cpu_seconds": 2.743125,
      "solve_wall_seconds": 0.722854058,
      "solve_cpu_seconds": 1.3167740000000001,
      "pca_peak_rss_bytes": 48640000,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 64619842
      }
    },
    {
      "samples": 4000,
      "markers": 80000,
      "samples_used": 3960,
      "markers_used": 73649,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 3.068936568,
      "pca_cpu_seconds": 5.096666,
      "solve_wall_seconds": 1.293674835,
      "solve_cpu_seconds": 2.410319,
      "pca_peak_rss_bytes": 55275520,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 64619842
      }
    },
    {
      "samples": 8000,
      "markers": 5000,
      "samples_used": 7920,
      "markers_used": 3946,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.65260128,
      "pca_cpu_seconds": 1.020356,
      "solve_wall_seconds": 0.32150415,
      "solve_cpu_seconds": 0.5220670000000001,
      "pca_peak_rss_bytes": 58765312,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 68340756
      }
    },
    {
      "samples": 16000,
      "markers": 2500,
      "samples_used": 15840,
      "markers_used": 1485,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 8,
      "repeats": 5,
      "pca_wall_seconds": 0.897827825,
      "pca_cpu_seconds": 1.417017,
      "solve_wall_seconds": 0.492255634,
      "solve_cpu_seconds": 0.773554,
      "pca_peak_rss_bytes": 80908288,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 77691277
      }
    },
    {
      "samples": 32000,
      "markers": 2500,
      "samples_used": 31680,
      "markers_used": 974,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 9,
      "repeats": 5,
      "pca_wall_seconds": 1.6692092459999999,
      "pca_cpu_seconds": 2.68062,
      "solve_wall_seconds": 1.030591379,
      "solve_cpu_seconds": 1.574157,
      "pca_peak_rss_bytes": 121151488,
      "plan": {
        "solver_bytes": 40960000,
        "table_bytes": 3822000,
        "other_bytes": 97018546
      }
    },
    {
      "samples": 1000,
      "markers": 160000,
      "samples_used": 990,
      "markers_used": 158998,
      "k": 10,
      "block_size": 20,
      "threads": 2,
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 2.543686453,
      "pca_cpu_seconds": 3.886908,
      "solve_wall_seconds": 0.866169852,
      "solve_cpu_seconds": 1.493905,
      "pca_peak_rss_bytes": 61710336,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 68774487
      }
    }
  ]
}`
