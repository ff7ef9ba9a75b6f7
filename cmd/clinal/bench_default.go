package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T21:32:50Z",
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
      0,
      1.3097836127536973,
      0.5771864688941757,
      0.5261714890186068
    ],
    "max_relative_residual": 0.07449658794082403,
    "leave_one_out_max_relative_error": 0.08405445608074824,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 57344000,
      "predicted": 59879100.27461824,
      "relative_error": 0.04420864039164063
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
      0.09345398924356112,
      6.649654402309493e-11,
      2.5173113122010417e-9,
      0.0000035718588337059284,
      0.000002577070328066986
    ],
    "max_relative_residual": 0.27224063289293876,
    "leave_one_out_max_relative_error": 0.26093370940864136,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 1.703112565,
      "predicted": 1.8910468786258996,
      "relative_error": 0.11034755863356538
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
      0.12294451971340345,
      6.096309522943868e-11,
      2.0014611360112076e-9,
      0.000005509954290660166,
      0.0000042585188806356015
    ],
    "max_relative_residual": 0.2523174702828359,
    "leave_one_out_max_relative_error": 0.2779193474026329,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 2.8852420000000003,
      "predicted": 3.2375958099602857,
      "relative_error": 0.1221227924591024
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
      "pca_wall_seconds": 0.173521123,
      "pca_cpu_seconds": 0.258936,
      "solve_wall_seconds": 0.075846048,
      "solve_cpu_seconds": 0.12498000000000001,
      "pca_peak_rss_bytes": 44470272,
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
      "pca_wall_seconds": 0.266062476,
      "pca_cpu_seconds": 0.41776399999999997,
      "solve_wall_seconds": 0.118341842,
      "solve_cpu_seconds": 0.204137,
      "pca_peak_rss_bytes": 49422336,
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
      "pca_wall_seconds": 0.451706872,
      "pca_cpu_seconds": 0.726977,
      "solve_wall_seconds": 0.20623248,
      "solve_cpu_seconds": 0.362352,
      "pca_peak_rss_bytes": 49639424,
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
      "pca_wall_seconds": 0.806652435,
      "pca_cpu_seconds": 1.328789,
      "solve_wall_seconds": 0.364490689,
      "solve_cpu_seconds": 0.6591840000000001,
      "pca_peak_rss_bytes": 58114048,
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
      "pca_wall_seconds": 0.24260712,
      "pca_cpu_seconds": 0.371976,
      "solve_wall_seconds": 0.132760902,
      "solve_cpu_seconds": 0.21248900000000004,
      "pca_peak_rss_bytes": 42938368,
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
      "pca_wall_seconds": 0.350529557,
      "pca_cpu_seconds": 0.5551309999999999,
      "solve_wall_seconds": 0.182133828,
      "solve_cpu_seconds": 0.306095,
      "pca_peak_rss_bytes": 43589632,
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
      "pca_wall_seconds": 0.589024215,
      "pca_cpu_seconds": 0.960245,
      "solve_wall_seconds": 0.303928275,
      "solve_cpu_seconds": 0.5258320000000001,
      "pca_peak_rss_bytes": 48345088,
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
      "pca_wall_seconds": 1.077890157,
      "pca_cpu_seconds": 1.780615,
      "solve_wall_seconds": 0.559141216,
      "solve_cpu_seconds": 0.9818520000000002,
      "pca_peak_rss_bytes": 54009856,
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
      "pca_wall_seconds": 0.374033712,
      "pca_cpu_seconds": 0.605472,
      "solve_wall_seconds": 0.220043671,
      "solve_cpu_seconds": 0.383069,
      "pca_peak_rss_bytes": 46575616,
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
      "pca_wall_seconds": 0.527009694,
      "pca_cpu_seconds": 0.886325,
      "solve_wall_seconds": 0.295893702,
      "solve_cpu_seconds": 0.5345489999999999,
      "pca_peak_rss_bytes": 49274880,
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
      "pca_wall_seconds": 0.914749408,
      "pca_cpu_seconds": 1.547955,
      "solve_wall_seconds": 0.505897036,
      "solve_cpu_seconds": 0.920989,
      "pca_peak_rss_bytes": 51310592,
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
      "pca_wall_seconds": 1.703112565,
      "pca_cpu_seconds": 2.8852420000000003,
      "solve_wall_seconds": 0.941860592,
      "solve_cpu_seconds": 1.719055,
      "pca_peak_rss_bytes": 57344000,
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
      "pca_wall_seconds": 0.377896768,
      "pca_cpu_seconds": 0.616657,
      "solve_wall_seconds": 0.242764076,
      "solve_cpu_seconds": 0.42312599999999995,
      "pca_peak_rss_bytes": 61992960,
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
      "pca_wall_seconds": 0.498935859,
      "pca_cpu_seconds": 0.8376650000000001,
      "solve_wall_seconds": 0.327642362,
      "solve_cpu_seconds": 0.568453,
      "pca_peak_rss_bytes": 74952704,
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
      "pca_wall_seconds": 0.904039186,
      "pca_cpu_seconds": 1.460798,
      "solve_wall_seconds": 0.68240803,
      "solve_cpu_seconds": 1.126106,
      "pca_peak_rss_bytes": 115617792,
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
      "pca_wall_seconds": 1.532526644,
      "pca_cpu_seconds": 2.5476039999999998,
      "solve_wall_seconds": 0.664814336,
      "solve_cpu_seconds": 1.219543,
      "pca_peak_rss_bytes": 69472256,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}`
