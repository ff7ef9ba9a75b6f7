package main

// defaultModelJSON is the built-in cost model of clinal bench --predict:
// a copy of benchmarks/scaling/bench-model.json, the recorded run on the
// project's 2-core reference machine (bench_test.go checks that the two
// agree). Rerun clinal bench on your own machine for a model of it.
const defaultModelJSON = `{
  "comment": "clinal bench cost model; see benchmarks/scaling/README.md",
  "created": "2026-12-02T13:32:20Z",
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
      4674805.476280984,
      1.5965918483948496,
      0.45858339546396504,
      0.47287524695546135
    ],
    "max_relative_residual": 0.060332973979266846,
    "leave_one_out_max_relative_error": 0.12852968696212486,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 55681024,
      "predicted": 54696244.55364643,
      "relative_error": -0.01768608720905651
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
      0.11767600382696264,
      7.64181401758506e-11,
      8.027938425321297e-9,
      0.0000054166772225081655,
      0.00000889704795197321
    ],
    "max_relative_residual": 0.29521784195435574,
    "leave_one_out_max_relative_error": 0.3166580999417459,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 3.054284272,
      "predicted": 3.425725710369717,
      "relative_error": 0.12161325053299343
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
      0.17580104833178234,
      6.753294302117645e-11,
      6.334689593228546e-9,
      0.000007117153237823588,
      0.00001444350836229326
    ],
    "max_relative_residual": 0.2425359826171669,
    "leave_one_out_max_relative_error": 0.2600732427274298,
    "held_out_largest": {
      "samples": 4000,
      "markers": 80000,
      "measured": 5.01656,
      "predicted": 5.536263059964746,
      "relative_error": 0.10359749708261146
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
      "pca_wall_seconds": 0.256815951,
      "pca_cpu_seconds": 0.400753,
      "solve_wall_seconds": 0.101470528,
      "solve_cpu_seconds": 0.16152,
      "pca_peak_rss_bytes": 41041920,
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
      "pca_wall_seconds": 0.404684225,
      "pca_cpu_seconds": 0.6324670000000001,
      "solve_wall_seconds": 0.158484026,
      "solve_cpu_seconds": 0.260117,
      "pca_peak_rss_bytes": 41848832,
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
      "pca_wall_seconds": 0.667944281,
      "pca_cpu_seconds": 1.033732,
      "solve_wall_seconds": 0.237392797,
      "solve_cpu_seconds": 0.4024559999999999,
      "pca_peak_rss_bytes": 48050176,
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
      "pca_wall_seconds": 1.248179423,
      "pca_cpu_seconds": 1.9134149999999999,
      "solve_wall_seconds": 0.426924855,
      "solve_cpu_seconds": 0.7489650000000001,
      "pca_peak_rss_bytes": 51015680,
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
      "pca_wall_seconds": 0.386323594,
      "pca_cpu_seconds": 0.601162,
      "solve_wall_seconds": 0.164994879,
      "solve_cpu_seconds": 0.2641,
      "pca_peak_rss_bytes": 39862272,
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
      "pca_wall_seconds": 0.603636508,
      "pca_cpu_seconds": 0.949057,
      "solve_wall_seconds": 0.249452895,
      "solve_cpu_seconds": 0.40442500000000003,
      "pca_peak_rss_bytes": 41439232,
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
      "pca_wall_seconds": 1.066347,
      "pca_cpu_seconds": 1.6516130000000002,
      "solve_wall_seconds": 0.429890029,
      "solve_cpu_seconds": 0.702738,
      "pca_peak_rss_bytes": 43929600,
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
      "pca_wall_seconds": 1.9749106109999999,
      "pca_cpu_seconds": 3.0931119999999996,
      "solve_wall_seconds": 0.783990171,
      "solve_cpu_seconds": 1.3140379999999998,
      "pca_peak_rss_bytes": 48709632,
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
      "pca_wall_seconds": 0.596755089,
      "pca_cpu_seconds": 0.9296389999999999,
      "solve_wall_seconds": 0.286331755,
      "solve_cpu_seconds": 0.447784,
      "pca_peak_rss_bytes": 44793856,
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
      "pca_wall_seconds": 0.893381517,
      "pca_cpu_seconds": 1.4400739999999999,
      "solve_wall_seconds": 0.376271252,
      "solve_cpu_seconds": 0.6419,
      "pca_peak_rss_bytes": 46428160,
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
      "pca_wall_seconds": 1.605273344,
      "pca_cpu_seconds": 2.6318889999999997,
      "solve_wall_seconds": 0.685707197,
      "solve_cpu_seconds": 1.2202859999999998,
      "pca_peak_rss_bytes": 49033216,
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
      "pca_wall_seconds": 3.054284272,
      "pca_cpu_seconds": 5.01656,
      "solve_wall_seconds": 1.298214487,
      "solve_cpu_seconds": 2.3372339999999996,
      "pca_peak_rss_bytes": 55681024,
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
      "pca_wall_seconds": 0.685509421,
      "pca_cpu_seconds": 1.056125,
      "solve_wall_seconds": 0.347279415,
      "solve_cpu_seconds": 0.5551550000000001,
      "pca_peak_rss_bytes": 57491456,
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
      "pca_wall_seconds": 0.962946172,
      "pca_cpu_seconds": 1.465797,
      "solve_wall_seconds": 0.554053776,
      "solve_cpu_seconds": 0.831755,
      "pca_peak_rss_bytes": 77598720,
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
      "pca_wall_seconds": 1.812004508,
      "pca_cpu_seconds": 2.685295,
      "solve_wall_seconds": 1.188285596,
      "solve_cpu_seconds": 1.648863,
      "pca_peak_rss_bytes": 111632384,
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
      "pca_wall_seconds": 2.423844183,
      "pca_cpu_seconds": 3.7329540000000003,
      "solve_wall_seconds": 0.772115632,
      "solve_cpu_seconds": 1.408182,
      "pca_peak_rss_bytes": 63528960,
      "plan": {
        "solver_bytes": 1280000,
        "table_bytes": 48096000,
        "other_bytes": 72276119
      }
    }
  ]
}`
