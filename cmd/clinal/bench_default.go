package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T23:03:15Z",
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
      347112.276635045,
      1.2106114749608863,
      0.5719283047639565,
      0.5499596264305657
    ],
    "max_relative_residual": 0.07531438704265214,
    "leave_one_out_max_relative_error": 0.08582149350216717,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 59748352,
      "predicted": 62069772.04104541,
      "relative_error": 0.038853289895684595
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
      0.08633446372676867,
      5.7979796965780283e-11,
      2.443201442070425e-9,
      0.0000031655400422789104,
      0.0000018130987370598738
    ],
    "max_relative_residual": 0.3061074299620308,
    "leave_one_out_max_relative_error": 0.2922710793170027,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 1.507861828,
      "predicted": 1.7118211231625935,
      "relative_error": 0.1352639156819304
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
      0.11397814513626922,
      5.24324180184241e-11,
      1.8844102453876717e-9,
      0.000004973527600413574,
      0.000002939863856277525
    ],
    "max_relative_residual": 0.2805333760375228,
    "leave_one_out_max_relative_error": 0.280047856055775,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 2.544253,
      "predicted": 2.8737450577519454,
      "relative_error": 0.1295044391229747
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
      "pca_wall_seconds": 0.160769148,
      "pca_cpu_seconds": 0.23865,
      "solve_wall_seconds": 0.075439507,
      "solve_cpu_seconds": 0.120015,
      "pca_peak_rss_bytes": 44777472,
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
      "pca_wall_seconds": 0.228585203,
      "pca_cpu_seconds": 0.357909,
      "solve_wall_seconds": 0.104313492,
      "solve_cpu_seconds": 0.17656499999999997,
      "pca_peak_rss_bytes": 45834240,
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
      "pca_wall_seconds": 0.399201404,
      "pca_cpu_seconds": 0.644467,
      "solve_wall_seconds": 0.175739559,
      "solve_cpu_seconds": 0.304755,
      "pca_peak_rss_bytes": 51707904,
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
      "pca_wall_seconds": 0.730419045,
      "pca_cpu_seconds": 1.189555,
      "solve_wall_seconds": 0.325031608,
      "solve_cpu_seconds": 0.5733570000000001,
      "pca_peak_rss_bytes": 58728448,
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
      "pca_wall_seconds": 0.21717625,
      "pca_cpu_seconds": 0.334803,
      "solve_wall_seconds": 0.117338501,
      "solve_cpu_seconds": 0.19196,
      "pca_peak_rss_bytes": 42819584,
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
      "pca_wall_seconds": 0.317235496,
      "pca_cpu_seconds": 0.504938,
      "solve_wall_seconds": 0.16073519,
      "solve_cpu_seconds": 0.279039,
      "pca_peak_rss_bytes": 48857088,
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
      "pca_wall_seconds": 0.542590216,
      "pca_cpu_seconds": 0.870132,
      "solve_wall_seconds": 0.282615172,
      "solve_cpu_seconds": 0.48131399999999996,
      "pca_peak_rss_bytes": 47489024,
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
      "pca_wall_seconds": 0.981129542,
      "pca_cpu_seconds": 1.6007930000000001,
      "solve_wall_seconds": 0.51071377,
      "solve_cpu_seconds": 0.886637,
      "pca_peak_rss_bytes": 55697408,
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
      "pca_wall_seconds": 0.325583736,
      "pca_cpu_seconds": 0.523965,
      "solve_wall_seconds": 0.190362301,
      "solve_cpu_seconds": 0.321422,
      "pca_peak_rss_bytes": 48525312,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 73026060
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
      "pca_wall_seconds": 0.469897938,
      "pca_cpu_seconds": 0.769862,
      "solve_wall_seconds": 0.2525142,
      "solve_cpu_seconds": 0.44138299999999997,
      "pca_peak_rss_bytes": 50520064,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 73032324
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
      "pca_wall_seconds": 0.826074564,
      "pca_cpu_seconds": 1.363966,
      "solve_wall_seconds": 0.454830319,
      "solve_cpu_seconds": 0.803424,
      "pca_peak_rss_bytes": 52662272,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 73038392
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
      "pca_wall_seconds": 1.507861828,
      "pca_cpu_seconds": 2.544253,
      "solve_wall_seconds": 0.825708226,
      "solve_cpu_seconds": 1.497801,
      "pca_peak_rss_bytes": 59748352,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 73038392
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
      "pca_wall_seconds": 0.338985151,
      "pca_cpu_seconds": 0.542641,
      "solve_wall_seconds": 0.216196671,
      "solve_cpu_seconds": 0.37174799999999997,
      "pca_peak_rss_bytes": 63414272,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 78064300
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
      "pca_wall_seconds": 0.45301338,
      "pca_cpu_seconds": 0.741282,
      "solve_wall_seconds": 0.318763892,
      "solve_cpu_seconds": 0.550195,
      "pca_peak_rss_bytes": 73347072,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 85722059
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
      "pca_wall_seconds": 0.828200818,
      "pca_cpu_seconds": 1.332214,
      "solve_wall_seconds": 0.633356947,
      "solve_cpu_seconds": 1.035198,
      "pca_peak_rss_bytes": 112427008,
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
      "pca_wall_seconds": 1.384245051,
      "pca_cpu_seconds": 2.283038,
      "solve_wall_seconds": 0.599789297,
      "solve_cpu_seconds": 1.0771330000000001,
      "pca_peak_rss_bytes": 69644288,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}
`
