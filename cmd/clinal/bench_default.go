package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T19:42:23Z",
  "machine": {
    "cpu": "Intel(R) Xeon(R) Processor",
    "cpus": 2,
    "arch": "amd64",
    "go": "go1.26.8",
    "clinal_version": "0.1.0-dev"
  },
  "k": 10,
  "oversample": 0,
  "threads": 2,
  "passes_range": [
    5,
    7
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
      635607.4011934332,
      1.1553031637792277,
      0.5291057900835734,
      0.5049715440974427
    ],
    "max_relative_residual": 0.06902603301109911,
    "leave_one_out_max_relative_error": 0.08384766457720594,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 54611968,
      "predicted": 55665718.744482696,
      "relative_error": 0.01929523478228612
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
      0.12714826901246032,
      6.426272829629556e-11,
      2.6124216092512803e-9,
      0.0000036967143218654587,
      0.000010687160281624957
    ],
    "max_relative_residual": 0.20161454575299542,
    "leave_one_out_max_relative_error": 0.2193623654608743,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 1.759177601,
      "predicted": 1.9549241619640219,
      "relative_error": 0.11127163104666082
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
      0.1780206794373339,
      6.029747876698203e-11,
      2.1339517372783057e-9,
      0.000005322960073119801,
      0.00001817420098616439
    ],
    "max_relative_residual": 0.21014485199693955,
    "leave_one_out_max_relative_error": 0.23490233925607784,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.008902,
      "predicted": 3.353907505935135,
      "relative_error": 0.1146615961354458
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.210383359,
      "pca_cpu_seconds": 0.324569,
      "solve_wall_seconds": 0.085974281,
      "solve_cpu_seconds": 0.128762,
      "pca_peak_rss_bytes": 41197568,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 3096000,
        "other_bytes": 72259139
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.308499156,
      "pca_cpu_seconds": 0.477747,
      "solve_wall_seconds": 0.136078668,
      "solve_cpu_seconds": 0.222679,
      "pca_peak_rss_bytes": 43507712,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 6096000,
        "other_bytes": 72259139
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
      "pca_wall_seconds": 0.474065779,
      "pca_cpu_seconds": 0.761745,
      "solve_wall_seconds": 0.205160466,
      "solve_cpu_seconds": 0.35424599999999995,
      "pca_peak_rss_bytes": 46616576,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 12096000,
        "other_bytes": 72276119
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
      "pca_wall_seconds": 0.86130271,
      "pca_cpu_seconds": 1.399414,
      "solve_wall_seconds": 0.371370416,
      "solve_cpu_seconds": 0.659403,
      "pca_peak_rss_bytes": 53383168,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 24096000,
        "other_bytes": 72276119
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.300749811,
      "pca_cpu_seconds": 0.478047,
      "solve_wall_seconds": 0.139955408,
      "solve_cpu_seconds": 0.227165,
      "pca_peak_rss_bytes": 39243776,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 3192000,
        "other_bytes": 65832935
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 0.403772663,
      "pca_cpu_seconds": 0.643594,
      "solve_wall_seconds": 0.189385519,
      "solve_cpu_seconds": 0.30794,
      "pca_peak_rss_bytes": 41680896,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 6192000,
        "other_bytes": 65839922
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 0.639478338,
      "pca_cpu_seconds": 1.053206,
      "solve_wall_seconds": 0.310584402,
      "solve_cpu_seconds": 0.542108,
      "pca_peak_rss_bytes": 43597824,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 12192000,
        "other_bytes": 65850068
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 1.137283569,
      "pca_cpu_seconds": 1.8644569999999998,
      "solve_wall_seconds": 0.570827009,
      "solve_cpu_seconds": 0.9992240000000001,
      "pca_peak_rss_bytes": 51990528,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 24192000,
        "other_bytes": 65850068
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.438820674,
      "pca_cpu_seconds": 0.703808,
      "solve_wall_seconds": 0.217000958,
      "solve_cpu_seconds": 0.368947,
      "pca_peak_rss_bytes": 44498944,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 69186060
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 0.580353818,
      "pca_cpu_seconds": 0.983185,
      "solve_wall_seconds": 0.2890829,
      "solve_cpu_seconds": 0.521736,
      "pca_peak_rss_bytes": 48652288,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 69192324
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 0.971291828,
      "pca_cpu_seconds": 1.649867,
      "solve_wall_seconds": 0.500790919,
      "solve_cpu_seconds": 0.91731,
      "pca_peak_rss_bytes": 48574464,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 69198392
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 1.759177601,
      "pca_cpu_seconds": 3.008902,
      "solve_wall_seconds": 0.939511401,
      "solve_cpu_seconds": 1.715565,
      "pca_peak_rss_bytes": 54611968,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 69198392
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.479062562,
      "pca_cpu_seconds": 0.791309,
      "solve_wall_seconds": 0.25512302,
      "solve_cpu_seconds": 0.44095999999999996,
      "pca_peak_rss_bytes": 56733696,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 74099372
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.675824801,
      "pca_cpu_seconds": 1.145956,
      "solve_wall_seconds": 0.355541786,
      "solve_cpu_seconds": 0.594133,
      "pca_peak_rss_bytes": 65609728,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 83030987
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 1.177126787,
      "pca_cpu_seconds": 1.9235759999999997,
      "solve_wall_seconds": 0.685100474,
      "solve_cpu_seconds": 1.113079,
      "pca_peak_rss_bytes": 105639936,
      "plan": {
        "solver_bytes": 40960000,
        "table_bytes": 3822000,
        "other_bytes": 102156382
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
      "pca_wall_seconds": 1.632319812,
      "pca_cpu_seconds": 2.641164,
      "solve_wall_seconds": 0.664164112,
      "solve_cpu_seconds": 1.220438,
      "pca_peak_rss_bytes": 64061440,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}`
