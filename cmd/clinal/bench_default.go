package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T13:52:46Z",
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
      3606538.828564586,
      1.6459663888480627,
      0.47572810716744657,
      0.4628044239130645
    ],
    "max_relative_residual": 0.03972124521415177,
    "leave_one_out_max_relative_error": 0.06882173952930071,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 54452224,
      "predicted": 55109184.178188026,
      "relative_error": 0.012064891567845404
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
      0.11124266478763956,
      7.699790855767067e-11,
      2.2166971596380574e-9,
      0.000004408014550618373,
      0.000014216862706074187
    ],
    "max_relative_residual": 0.3006220148145323,
    "leave_one_out_max_relative_error": 0.287940386784323,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 2.152121562,
      "predicted": 2.4029768645154492,
      "relative_error": 0.11656186478719421
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
      0.16073115404010974,
      6.794816564760167e-11,
      1.8624412843799964e-9,
      0.000005644647144426555,
      0.00002463682865435367
    ],
    "max_relative_residual": 0.20458568130456445,
    "leave_one_out_max_relative_error": 0.19992413240886997,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.613019,
      "predicted": 3.9793100594434208,
      "relative_error": 0.10138088381030408
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
      "pca_wall_seconds": 0.225119082,
      "pca_cpu_seconds": 0.346762,
      "solve_wall_seconds": 0.103913734,
      "solve_cpu_seconds": 0.16701499999999997,
      "pca_peak_rss_bytes": 41218048,
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
      "pca_wall_seconds": 0.324940241,
      "pca_cpu_seconds": 0.505418,
      "solve_wall_seconds": 0.158611014,
      "solve_cpu_seconds": 0.25870699999999996,
      "pca_peak_rss_bytes": 43266048,
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
      "pca_wall_seconds": 0.512465765,
      "pca_cpu_seconds": 0.795678,
      "solve_wall_seconds": 0.229775206,
      "solve_cpu_seconds": 0.390806,
      "pca_peak_rss_bytes": 45850624,
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
      "pca_wall_seconds": 0.960704906,
      "pca_cpu_seconds": 1.486391,
      "solve_wall_seconds": 0.427973338,
      "solve_cpu_seconds": 0.7571469999999999,
      "pca_peak_rss_bytes": 51126272,
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
      "pca_wall_seconds": 0.320237776,
      "pca_cpu_seconds": 0.49157,
      "solve_wall_seconds": 0.171013742,
      "solve_cpu_seconds": 0.261395,
      "pca_peak_rss_bytes": 41488384,
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
      "pca_wall_seconds": 0.466976067,
      "pca_cpu_seconds": 0.72299,
      "solve_wall_seconds": 0.262459049,
      "solve_cpu_seconds": 0.40341000000000005,
      "pca_peak_rss_bytes": 40402944,
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
      "pca_wall_seconds": 0.755985211,
      "pca_cpu_seconds": 1.215688,
      "solve_wall_seconds": 0.438343961,
      "solve_cpu_seconds": 0.72677,
      "pca_peak_rss_bytes": 44728320,
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
      "pca_wall_seconds": 1.411521163,
      "pca_cpu_seconds": 2.203119,
      "solve_wall_seconds": 0.808196412,
      "solve_cpu_seconds": 1.3441869999999998,
      "pca_peak_rss_bytes": 49721344,
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
      "pca_wall_seconds": 0.507099621,
      "pca_cpu_seconds": 0.7969999999999999,
      "solve_wall_seconds": 0.294185649,
      "solve_cpu_seconds": 0.483153,
      "pca_peak_rss_bytes": 44650496,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 3384000,
        "other_bytes": 66526465
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
      "pca_wall_seconds": 0.666339186,
      "pca_cpu_seconds": 1.113717,
      "solve_wall_seconds": 0.383194724,
      "solve_cpu_seconds": 0.658077,
      "pca_peak_rss_bytes": 46718976,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 6384000,
        "other_bytes": 66531163
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
      "pca_wall_seconds": 1.144732663,
      "pca_cpu_seconds": 1.900018,
      "solve_wall_seconds": 0.679039917,
      "solve_cpu_seconds": 1.211416,
      "pca_peak_rss_bytes": 50278400,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 12384000,
        "other_bytes": 66535714
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
      "pca_wall_seconds": 2.152121562,
      "pca_cpu_seconds": 3.613019,
      "solve_wall_seconds": 1.330785755,
      "solve_cpu_seconds": 2.3697410000000003,
      "pca_peak_rss_bytes": 54452224,
      "plan": {
        "solver_bytes": 5120000,
        "table_bytes": 24384000,
        "other_bytes": 66535714
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
      "pca_wall_seconds": 0.574330095,
      "pca_cpu_seconds": 0.922688,
      "solve_wall_seconds": 0.3376497,
      "solve_cpu_seconds": 0.534846,
      "pca_peak_rss_bytes": 56414208,
      "plan": {
        "solver_bytes": 10240000,
        "table_bytes": 2268000,
        "other_bytes": 69619700
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
      "pca_wall_seconds": 0.855445312,
      "pca_cpu_seconds": 1.309235,
      "solve_wall_seconds": 0.510270131,
      "solve_cpu_seconds": 0.7337370000000001,
      "pca_peak_rss_bytes": 77516800,
      "plan": {
        "solver_bytes": 20480000,
        "table_bytes": 2286000,
        "other_bytes": 78970221
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
      "pca_wall_seconds": 1.744772014,
      "pca_cpu_seconds": 2.6284039999999997,
      "solve_wall_seconds": 1.170397557,
      "solve_cpu_seconds": 1.630072,
      "pca_peak_rss_bytes": 116576256,
      "plan": {
        "solver_bytes": 40960000,
        "table_bytes": 3822000,
        "other_bytes": 98297490
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
      "pca_wall_seconds": 1.778030807,
      "pca_cpu_seconds": 2.73239,
      "solve_wall_seconds": 0.772906892,
      "solve_cpu_seconds": 1.3946209999999999,
      "pca_peak_rss_bytes": 63217664,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}`
