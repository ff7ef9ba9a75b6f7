package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T22:52:43Z",
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
      1.3000653197765535,
      0.5696189631997527,
      0.5692778519894417
    ],
    "max_relative_residual": 0.078454762980817,
    "leave_one_out_max_relative_error": 0.0883271356153793,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 58425344,
      "predicted": 61104030.573412724,
      "relative_error": 0.04584802399131305
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
      0.07457959969227557,
      5.790818909674044e-11,
      2.4357329998544075e-9,
      0.000003239929700761349,
      0.000002202221632027262
    ],
    "max_relative_residual": 0.3303475725805085,
    "leave_one_out_max_relative_error": 0.3357277958107395,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 1.499036875,
      "predicted": 1.7036812685915619,
      "relative_error": 0.1365172511794026
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
      0.09625548912272758,
      5.2259339317858544e-11,
      1.7759980061943228e-9,
      0.000005178746717289102,
      0.00000504175150950848
    ],
    "max_relative_residual": 0.278319232416687,
    "leave_one_out_max_relative_error": 0.3123353748871138,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 2.563944,
      "predicted": 2.8143894973379755,
      "relative_error": 0.09767978447968284
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
      "pca_wall_seconds": 0.146223436,
      "pca_cpu_seconds": 0.226336,
      "solve_wall_seconds": 0.066903513,
      "solve_cpu_seconds": 0.11224899999999999,
      "pca_peak_rss_bytes": 43859968,
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
      "pca_wall_seconds": 0.229555884,
      "pca_cpu_seconds": 0.362517,
      "solve_wall_seconds": 0.101705586,
      "solve_cpu_seconds": 0.172819,
      "pca_peak_rss_bytes": 46784512,
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
      "pca_wall_seconds": 0.398344955,
      "pca_cpu_seconds": 0.62437,
      "solve_wall_seconds": 0.184469787,
      "solve_cpu_seconds": 0.304994,
      "pca_peak_rss_bytes": 50561024,
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
      "pca_wall_seconds": 0.697918708,
      "pca_cpu_seconds": 1.135072,
      "solve_wall_seconds": 0.308672655,
      "solve_cpu_seconds": 0.551982,
      "pca_peak_rss_bytes": 58085376,
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
      "pca_wall_seconds": 0.213096531,
      "pca_cpu_seconds": 0.32415700000000003,
      "solve_wall_seconds": 0.119724283,
      "solve_cpu_seconds": 0.18983499999999998,
      "pca_peak_rss_bytes": 42717184,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 3192000,
        "other_bytes": 67112935
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
      "pca_wall_seconds": 0.307329657,
      "pca_cpu_seconds": 0.491137,
      "solve_wall_seconds": 0.16209411,
      "solve_cpu_seconds": 0.276018,
      "pca_peak_rss_bytes": 45211648,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 6192000,
        "other_bytes": 67119922
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
      "pca_wall_seconds": 0.539032594,
      "pca_cpu_seconds": 0.850333,
      "solve_wall_seconds": 0.275872099,
      "solve_cpu_seconds": 0.468185,
      "pca_peak_rss_bytes": 47869952,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 12192000,
        "other_bytes": 67130068
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
      "pca_wall_seconds": 0.968256114,
      "pca_cpu_seconds": 1.588784,
      "solve_wall_seconds": 0.502617009,
      "solve_cpu_seconds": 0.875484,
      "pca_peak_rss_bytes": 55320576,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 24192000,
        "other_bytes": 67130068
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
      "pca_wall_seconds": 0.341367539,
      "pca_cpu_seconds": 0.520906,
      "solve_wall_seconds": 0.203753612,
      "solve_cpu_seconds": 0.326917,
      "pca_peak_rss_bytes": 48185344,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 70466060
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
      "pca_wall_seconds": 0.457114,
      "pca_cpu_seconds": 0.749998,
      "solve_wall_seconds": 0.244662918,
      "solve_cpu_seconds": 0.437946,
      "pca_peak_rss_bytes": 49799168,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 70472324
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
      "pca_wall_seconds": 0.813590778,
      "pca_cpu_seconds": 1.3435210000000002,
      "solve_wall_seconds": 0.437192768,
      "solve_cpu_seconds": 0.788563,
      "pca_peak_rss_bytes": 53477376,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 70478392
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
      "pca_wall_seconds": 1.499036875,
      "pca_cpu_seconds": 2.563944,
      "solve_wall_seconds": 0.8196537,
      "solve_cpu_seconds": 1.502317,
      "pca_peak_rss_bytes": 58425344,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 70478392
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
      "pca_wall_seconds": 0.32652856,
      "pca_cpu_seconds": 0.543306,
      "solve_wall_seconds": 0.21790649,
      "solve_cpu_seconds": 0.38231899999999996,
      "pca_peak_rss_bytes": 62517248,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 75504300
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
      "pca_wall_seconds": 0.412832645,
      "pca_cpu_seconds": 0.6651699999999999,
      "solve_wall_seconds": 0.282985583,
      "solve_cpu_seconds": 0.474255,
      "pca_peak_rss_bytes": 74059776,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 83162059
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
      "pca_wall_seconds": 0.858453836,
      "pca_cpu_seconds": 1.3827760000000002,
      "solve_wall_seconds": 0.65128741,
      "solve_cpu_seconds": 0.996441,
      "pca_peak_rss_bytes": 113319936,
      "plan": {
        "solver_bytes": 40960000,
        "table_bytes": 3822000,
        "other_bytes": 102287454
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
      "pca_wall_seconds": 1.36253135,
      "pca_cpu_seconds": 2.2471449999999997,
      "solve_wall_seconds": 0.579669582,
      "solve_cpu_seconds": 1.0563250000000002,
      "pca_peak_rss_bytes": 70959104,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}
`
