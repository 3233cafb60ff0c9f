{
  "targets": [
    {
      "target_name": "rillbook_dsp",
      "sources": ["src/dsp.c"],
      "cflags": ["-O3", "-ffp-contract=off", "-fno-trapping-math", "-Wall", "-Wextra", "-Wno-unused-parameter"],
      "libraries": ["-lfftw3", "-lm"]
    }
  ]
}
