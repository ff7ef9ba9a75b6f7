package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T17:25:19Z",
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
      9378361.727950523,
      1.1166168495802122,
      0.38700361470434147,
      0.43950838432923417
    ],
    "max_relative_residual": 0.060333090389227406,
    "leave_one_out_max_relative_error": 0.06684866017706859,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 50667520,
      "predicted": 53034656.300923094,
      "relative_error": 0.04671900856649569
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
      0.11683235086080396,
      6.056203946817415e-11,
      2.1162493770378564e-9,
      0.000003878556242206632,
      0.000015593079117396534
    ],
    "max_relative_residual": 0.20025718775637436,
    "leave_one_out_max_relative_error": 0.20545792232728477,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 1.8291882529999999,
      "predicted": 2.029617326897702,
      "relative_error": 0.10957268808663279
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
      0.15717985522140193,
      5.551859411008042e-11,
      1.6597609301951134e-9,
      0.000005645813672648867,
      0.000027479956757166733
    ],
    "max_relative_residual": 0.18790605421914885,
    "leave_one_out_max_relative_error": 0.20743063401933437,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.126533,
      "predicted": 3.4284671812325853,
      "relative_error": 0.09657156384806598
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
      "pca_wall_seconds": 0.216515106,
      "pca_cpu_seconds": 0.336823,
      "solve_wall_seconds": 0.088509166,
      "solve_cpu_seconds": 0.137063,
      "pca_peak_rss_bytes": 40673280,
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
      "pca_wall_seconds": 0.310259722,
      "pca_cpu_seconds": 0.473828,
      "solve_wall_seconds": 0.129026707,
      "solve_cpu_seconds": 0.212469,
      "pca_peak_rss_bytes": 40259584,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.485189893,
      "pca_cpu_seconds": 0.782851,
      "solve_wall_seconds": 0.210691514,
      "solve_cpu_seconds": 0.370662,
      "pca_peak_rss_bytes": 44867584,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 0.856659244,
      "pca_cpu_seconds": 1.3773680000000001,
      "solve_wall_seconds": 0.387058447,
      "solve_cpu_seconds": 0.682966,
      "pca_peak_rss_bytes": 50675712,
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
      "pca_wall_seconds": 0.294637622,
      "pca_cpu_seconds": 0.446952,
      "solve_wall_seconds": 0.142870247,
      "solve_cpu_seconds": 0.21742599999999998,
      "pca_peak_rss_bytes": 40660992,
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
      "pca_wall_seconds": 0.402296774,
      "pca_cpu_seconds": 0.630029,
      "solve_wall_seconds": 0.201194989,
      "solve_cpu_seconds": 0.33244999999999997,
      "pca_peak_rss_bytes": 41422848,
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
      "pca_wall_seconds": 0.656927877,
      "pca_cpu_seconds": 1.054131,
      "solve_wall_seconds": 0.337526218,
      "solve_cpu_seconds": 0.5732360000000001,
      "pca_peak_rss_bytes": 44134400,
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
      "pca_wall_seconds": 1.20756987,
      "pca_cpu_seconds": 1.96277,
      "solve_wall_seconds": 0.653306978,
      "solve_cpu_seconds": 1.134026,
      "pca_peak_rss_bytes": 50188288,
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
      "pca_wall_seconds": 0.457647166,
      "pca_cpu_seconds": 0.7478459999999999,
      "solve_wall_seconds": 0.238832448,
      "solve_cpu_seconds": 0.411026,
      "pca_peak_rss_bytes": 41091072,
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
      "pca_wall_seconds": 0.622599656,
      "pca_cpu_seconds": 1.027706,
      "solve_wall_seconds": 0.318616214,
      "solve_cpu_seconds": 0.553872,
      "pca_peak_rss_bytes": 43646976,
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
      "pca_wall_seconds": 1.004769909,
      "pca_cpu_seconds": 1.684565,
      "solve_wall_seconds": 0.555791157,
      "solve_cpu_seconds": 0.987572,
      "pca_peak_rss_bytes": 44625920,
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
      "pca_wall_seconds": 1.8291882529999999,
      "pca_cpu_seconds": 3.126533,
      "solve_wall_seconds": 1.046758463,
      "solve_cpu_seconds": 1.9189859999999999,
      "pca_peak_rss_bytes": 50667520,
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
      "pca_wall_seconds": 0.510121816,
      "pca_cpu_seconds": 0.828888,
      "solve_wall_seconds": 0.26860648,
      "solve_cpu_seconds": 0.44989899999999994,
      "pca_peak_rss_bytes": 51531776,
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
      "pca_wall_seconds": 0.721745226,
      "pca_cpu_seconds": 1.215899,
      "solve_wall_seconds": 0.332753622,
      "solve_cpu_seconds": 0.56535,
      "pca_peak_rss_bytes": 67006464,
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
      "passes": 8,
      "repeats": 5,
      "pca_wall_seconds": 1.372634157,
      "pca_cpu_seconds": 2.332331,
      "solve_wall_seconds": 0.746094438,
      "solve_cpu_seconds": 1.243434,
      "pca_peak_rss_bytes": 96632832,
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
      "passes": 7,
      "repeats": 5,
      "pca_wall_seconds": 1.659554105,
      "pca_cpu_seconds": 2.706264,
      "solve_wall_seconds": 0.739012401,
      "solve_cpu_seconds": 1.3458620000000001,
      "pca_peak_rss_bytes": 59695104,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}
`
