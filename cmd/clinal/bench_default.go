package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T15:33:39Z",
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
      4149130.091488581,
      1.6348412045210006,
      0.46960217357734374,
      0.4803530293495483
    ],
    "max_relative_residual": 0.06936672354248075,
    "leave_one_out_max_relative_error": 0.10330860792786822,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 54644736,
      "predicted": 57184858.14102731,
      "relative_error": 0.04648429706069601
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
      0.12957908628151654,
      7.738137342361526e-11,
      2.0131907011184458e-9,
      0.00000448422855187247,
      0.000014325542652831774
    ],
    "max_relative_residual": 0.2637412051901542,
    "leave_one_out_max_relative_error": 0.2716890972861091,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 2.179942575,
      "predicted": 2.3825123960624177,
      "relative_error": 0.09292438405741832
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
      0.1846707021276744,
      6.873976908654235e-11,
      1.6219202633083426e-9,
      0.000006909304627841682,
      0.000024741929708329578
    ],
    "max_relative_residual": 0.20621388536551466,
    "leave_one_out_max_relative_error": 0.21792780958234015,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.733619,
      "predicted": 4.024557474899345,
      "relative_error": 0.07792398605731998
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
      "pca_wall_seconds": 0.253882271,
      "pca_cpu_seconds": 0.389981,
      "solve_wall_seconds": 0.107634338,
      "solve_cpu_seconds": 0.173055,
      "pca_peak_rss_bytes": 41017344,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.366014235,
      "pca_cpu_seconds": 0.5754090000000001,
      "solve_wall_seconds": 0.16867879,
      "solve_cpu_seconds": 0.27201,
      "pca_peak_rss_bytes": 43282432,
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
      "pca_wall_seconds": 0.539629002,
      "pca_cpu_seconds": 0.8759939999999999,
      "solve_wall_seconds": 0.242071189,
      "solve_cpu_seconds": 0.41399300000000006,
      "pca_peak_rss_bytes": 45469696,
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
      "pca_wall_seconds": 0.938981613,
      "pca_cpu_seconds": 1.551253,
      "solve_wall_seconds": 0.426265473,
      "solve_cpu_seconds": 0.7405510000000001,
      "pca_peak_rss_bytes": 53387264,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.319642385,
      "pca_cpu_seconds": 0.517451,
      "solve_wall_seconds": 0.164850822,
      "solve_cpu_seconds": 0.274294,
      "pca_peak_rss_bytes": 41029632,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.469585912,
      "pca_cpu_seconds": 0.75927,
      "solve_wall_seconds": 0.244947265,
      "solve_cpu_seconds": 0.40453399999999995,
      "pca_peak_rss_bytes": 43036672,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.760817504,
      "pca_cpu_seconds": 1.22766,
      "solve_wall_seconds": 0.43006891,
      "solve_cpu_seconds": 0.712067,
      "pca_peak_rss_bytes": 45965312,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.417860294,
      "pca_cpu_seconds": 2.2851410000000003,
      "solve_wall_seconds": 0.807320151,
      "solve_cpu_seconds": 1.3698259999999998,
      "pca_peak_rss_bytes": 50548736,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.495177051,
      "pca_cpu_seconds": 0.802892,
      "solve_wall_seconds": 0.288216333,
      "solve_cpu_seconds": 0.48294500000000007,
      "pca_peak_rss_bytes": 45461504,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 0.696484341,
      "pca_cpu_seconds": 1.1635010000000001,
      "solve_wall_seconds": 0.394612928,
      "solve_cpu_seconds": 0.691792,
      "pca_peak_rss_bytes": 46477312,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 1.171784251,
      "pca_cpu_seconds": 2.000177,
      "solve_wall_seconds": 0.707175016,
      "solve_cpu_seconds": 1.259879,
      "pca_peak_rss_bytes": 51224576,
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
      "passes": 6,
      "repeats": 5,
      "pca_wall_seconds": 2.179942575,
      "pca_cpu_seconds": 3.733619,
      "solve_wall_seconds": 1.334282259,
      "solve_cpu_seconds": 2.38431,
      "pca_peak_rss_bytes": 54644736,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.566417051,
      "pca_cpu_seconds": 0.925436,
      "solve_wall_seconds": 0.328121691,
      "solve_cpu_seconds": 0.5398780000000001,
      "pca_peak_rss_bytes": 58138624,
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
      "passes": 8,
      "repeats": 5,
      "pca_wall_seconds": 0.865717923,
      "pca_cpu_seconds": 1.3834529999999998,
      "solve_wall_seconds": 0.505242798,
      "solve_cpu_seconds": 0.792739,
      "pca_peak_rss_bytes": 83513344,
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
      "passes": 9,
      "repeats": 5,
      "pca_wall_seconds": 1.6799534999999999,
      "pca_cpu_seconds": 2.6622939999999997,
      "solve_wall_seconds": 1.063997991,
      "solve_cpu_seconds": 1.619208,
      "pca_peak_rss_bytes": 116371456,
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
      "pca_wall_seconds": 1.7990559350000002,
      "pca_cpu_seconds": 2.970423,
      "solve_wall_seconds": 0.796617071,
      "solve_cpu_seconds": 1.4419220000000001,
      "pca_peak_rss_bytes": 63778816,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}
`
