package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T05:45:28Z",
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
    5,
    8
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
      2.858423206885965,
      0.6162213543178179,
      0.9878068129682733
    ],
    "max_relative_residual": 0.24130121223670664,
    "leave_one_out_max_relative_error": 0.34643746386395113,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 106147840,
      "predicted": 91436552.33471653,
      "relative_error": -0.1385924354681496
    }
  },
  "wall": {
    "formula": "wall_seconds = c0 + c_pass * N*M*l*passes/threads + c_once * N*M/threads + c_mk * M (l = k + oversample)",
    "terms": [
      "1",
      "N*M*l*passes/threads",
      "N*M/threads",
      "M"
    ],
    "coefficients": [
      0.11638543335349318,
      1.750820128712579e-10,
      7.797189796096088e-9,
      0.00001390154320816175
    ],
    "max_relative_residual": 0.30121027522962796,
    "leave_one_out_max_relative_error": 0.2737212859035608,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 5.491912321,
      "predicted": 5.301757631448625,
      "relative_error": -0.03462449479105123
    }
  },
  "cpu": {
    "formula": "cpu_seconds = d0 + d_pass * N*M*l*passes + d_once * N*M + d_mk * M",
    "terms": [
      "1",
      "N*M*l*passes",
      "N*M",
      "M"
    ],
    "coefficients": [
      0.09409216377879087,
      1.5994794455233236e-10,
      5.823454778199986e-9,
      0.000017966486426519304
    ],
    "max_relative_residual": 0.15677813540975583,
    "leave_one_out_max_relative_error": 0.16056655284219135,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 9.06263,
      "predicted": 8.538693494585605,
      "relative_error": -0.05781285404064773
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
      "pca_wall_seconds": 0.400217474,
      "pca_cpu_seconds": 0.575455,
      "solve_wall_seconds": 0.234536967,
      "solve_cpu_seconds": 0.354362,
      "pca_peak_rss_bytes": 46911488,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 3096000,
        "other_bytes": 83596998
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
      "pca_wall_seconds": 0.62060611,
      "pca_cpu_seconds": 0.909327,
      "solve_wall_seconds": 0.309090787,
      "solve_cpu_seconds": 0.49534700000000004,
      "pca_peak_rss_bytes": 56127488,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 6096000,
        "other_bytes": 83596998
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 1.142898522,
      "pca_cpu_seconds": 1.6441919999999999,
      "solve_wall_seconds": 0.490167613,
      "solve_cpu_seconds": 0.732395,
      "pca_peak_rss_bytes": 61370368,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 12096000,
        "other_bytes": 83605839
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 2.363433878,
      "pca_cpu_seconds": 3.205211,
      "solve_wall_seconds": 0.910533324,
      "solve_cpu_seconds": 1.566522,
      "pca_peak_rss_bytes": 76427264,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 24096000,
        "other_bytes": 83610720
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
      "pca_wall_seconds": 0.55649077,
      "pca_cpu_seconds": 0.7224,
      "solve_wall_seconds": 0.293870974,
      "solve_cpu_seconds": 0.41243700000000005,
      "pca_peak_rss_bytes": 71405568,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 3192000,
        "other_bytes": 96848329
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
      "pca_wall_seconds": 1.02898192,
      "pca_cpu_seconds": 1.417071,
      "solve_wall_seconds": 0.538242547,
      "solve_cpu_seconds": 0.7577329999999999,
      "pca_peak_rss_bytes": 80400384,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 6192000,
        "other_bytes": 96848329
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
      "pca_wall_seconds": 1.724081391,
      "pca_cpu_seconds": 2.7172750000000003,
      "solve_wall_seconds": 0.751961562,
      "solve_cpu_seconds": 1.2804280000000001,
      "pca_peak_rss_bytes": 90480640,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 12192000,
        "other_bytes": 96866581
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
      "pca_wall_seconds": 3.51221016,
      "pca_cpu_seconds": 5.4437869999999995,
      "solve_wall_seconds": 1.460275825,
      "solve_cpu_seconds": 2.783629,
      "pca_peak_rss_bytes": 100343808,
      "plan": {
        "solver_bytes": 2560000,
        "table_bytes": 24192000,
        "other_bytes": 96877705
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
      "pca_wall_seconds": 0.934536338,
      "pca_cpu_seconds": 1.450062,
      "solve_wall_seconds": 0.514979954,
      "solve_cpu_seconds": 0.8301130000000001,
      "pca_peak_rss_bytes": 82243584,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 87877361
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
      "pca_wall_seconds": 1.377700197,
      "pca_cpu_seconds": 2.316413,
      "solve_wall_seconds": 0.714609815,
      "solve_cpu_seconds": 1.249915,
      "pca_peak_rss_bytes": 84705280,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 87879698
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
      "pca_wall_seconds": 2.552693319,
      "pca_cpu_seconds": 4.296543,
      "solve_wall_seconds": 1.261941221,
      "solve_cpu_seconds": 2.294431,
      "pca_peak_rss_bytes": 90353664,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 87945644
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
      "pca_wall_seconds": 5.491912321,
      "pca_cpu_seconds": 9.06263,
      "solve_wall_seconds": 2.528265835,
      "solve_cpu_seconds": 4.73992,
      "pca_peak_rss_bytes": 106147840,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 87945644
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
      "pca_wall_seconds": 0.984780178,
      "pca_cpu_seconds": 1.525096,
      "solve_wall_seconds": 0.703204788,
      "solve_cpu_seconds": 1.079932,
      "pca_peak_rss_bytes": 93413376,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 82837586
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
      "pca_wall_seconds": 1.077357227,
      "pca_cpu_seconds": 1.503347,
      "solve_wall_seconds": 0.887550598,
      "solve_cpu_seconds": 1.240895,
      "pca_peak_rss_bytes": 117092352,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 93576368
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
      "passes": 8,
      "repeats": 5,
      "pca_wall_seconds": 2.266134875,
      "pca_cpu_seconds": 3.1073540000000004,
      "solve_wall_seconds": 2.000871928,
      "solve_cpu_seconds": 2.736142,
      "pca_peak_rss_bytes": 166105088,
      "plan": {
        "solver_bytes": 40960000,
        "table_bytes": 3822000,
        "other_bytes": 110689482
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
      "passes": 5,
      "repeats": 5,
      "pca_wall_seconds": 4.155927253,
      "pca_cpu_seconds": 6.599133,
      "solve_wall_seconds": 1.888182124,
      "solve_cpu_seconds": 3.412988,
      "pca_peak_rss_bytes": 93827072,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 83613138
      }
    }
  ]
}
`
