/*
 * Rillbook's native render kernels: the loops of an access-copy render that
 * JavaScript runs about 3 times slower than this (scripts/bench/render.ts).
 *
 *   decode(bytes, bits, isFloat, out)                 interleaved WAVE data → float64
 *   encode(samples, count, gain, bits, dither, out)   float64 or float32 → interleaved PCM, TPDF dither
 *   peak(samples, count[, out32])                     largest magnitude; with out32, also the
 *                                                     samples rounded to float32 (a trimmed copy's)
 *   new Convolver(taps, channels, fftSize)            overlap-save FIR filter, state kept
 *     .process(input, frames, output)                 interleaved float64 in and out
 *   importWisdom(path) / exportWisdom(path)           FFTW's measured plans, kept across processes
 *   unsavedPlans()                                    plans measured since the last export
 *   allocate(bytes) / release(buffer)                 memory for a trimmed render's kept signal, in
 *                                                     huge pages where the kernel offers them
 *
 * Each one does exactly what its JavaScript twin in lib/audio does (codecs.ts,
 * lib/audio/convolver.ts): the same scaling, the same dither sequence and the
 * same rounding, so the two engines write the same bytes; tests compare them.
 * The FFTs are FFTW 3 (double precision, Debian's libfftw3), planned with
 * FFTW_MEASURE (FFTW times candidate algorithms and keeps the fastest: about half
 * the time of FFTW_ESTIMATE's guess at the render's sizes). Measuring takes about a
 * second per size, so each size is planned once per process (the plans are shared
 * by every convolver of that size) and the measurements are kept as FFTW "wisdom"
 * in a file that lib/audio/dsp.ts imports at load and exports after a new size:
 * later processes plan from it at once and pick the same algorithms, so the same
 * machine filters with the same arithmetic. FFTW's planner is not thread-safe: the
 * render calls this from Node's main thread only.
 */
#include <fftw3.h>
#include <math.h>
#include <node_api.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>

/* AVX-512 (x86-64-v4) and AVX2 copies of the hot loops beside the baseline one, chosen at load time (x86-64 only). */
#if defined(__x86_64__) && defined(__GNUC__)
#define VECTOR_CLONES __attribute__((target_clones("arch=x86-64-v4", "avx2", "default")))
#else
#define VECTOR_CLONES
#endif

#define CHECK(call)                                                        \
  do {                                                                     \
    if ((call) != napi_ok) {                                               \
      napi_throw_error(env, NULL, "Rillbook native dsp: N-API call failed"); \
      return NULL;                                                         \
    }                                                                      \
  } while (0)

static napi_value throw_type(napi_env env, const char* message) {
  napi_throw_type_error(env, NULL, message);
  return NULL;
}

static napi_value throw_range(napi_env env, const char* message) {
  napi_throw_range_error(env, NULL, message);
  return NULL;
}

/* 1 when v is a typed array of the wanted kind (its data and length set), else 0. */
static int typed(napi_env env, napi_value v, napi_typedarray_type want, void** data, size_t* length) {
  bool is = false;
  *data = NULL;
  *length = 0;
  if (napi_is_typedarray(env, v, &is) != napi_ok || !is) return 0;
  napi_typedarray_type type;
  napi_value buffer;
  size_t offset;
  if (napi_get_typedarray_info(env, v, &type, length, data, &buffer, &offset) != napi_ok || type != want) {
    *data = NULL;
    *length = 0;
    return 0;
  }
  return 1;
}

static int get_int(napi_env env, napi_value v, int64_t* out) {
  napi_valuetype t;
  if (napi_typeof(env, v, &t) != napi_ok || t != napi_number) return 0;
  return napi_get_value_int64(env, v, out) == napi_ok;
}

static int get_double(napi_env env, napi_value v, double* out) {
  napi_valuetype t;
  if (napi_typeof(env, v, &t) != napi_ok || t != napi_number) return 0;
  return napi_get_value_double(env, v, out) == napi_ok;
}

/* ---------------------------------------------------------------- decode */

/* 24-bit little-endian PCM → float64, full scale 1.0 (the word lengths' commonest, so vectorised). */
VECTOR_CLONES
static void decode24(const uint8_t* restrict b, size_t count, double* restrict out) {
  for (size_t i = 0; i < count; i++) {
    const uint8_t* p = b + 3 * i;
    const int32_t v = (int32_t)((uint32_t)p[0] << 8 | (uint32_t)p[1] << 16 | (uint32_t)p[2] << 24) >> 8;
    out[i] = v / 8388608.0;
  }
}

static napi_value decode(napi_env env, napi_callback_info info) {
  size_t argc = 4;
  napi_value argv[4];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  if (argc < 4) return throw_type(env, "decode(bytes, bits, isFloat, out) takes four arguments.");
  size_t nbytes, nout;
  uint8_t* b;
  double* out;
  int64_t bits;
  bool is_float;
  if (!typed(env, argv[0], napi_uint8_array, (void**)&b, &nbytes)) return throw_type(env, "decode: bytes must be a Uint8Array.");
  if (!typed(env, argv[3], napi_float64_array, (void**)&out, &nout)) return throw_type(env, "decode: out must be a Float64Array.");
  if (!get_int(env, argv[1], &bits)) return throw_type(env, "decode: bits must be a number.");
  if (napi_get_value_bool(env, argv[2], &is_float) != napi_ok) return throw_type(env, "decode: isFloat must be a boolean.");
  int width = (int)(bits / 8);
  int ok = is_float ? (bits == 32 || bits == 64) : (bits == 16 || bits == 24 || bits == 32);
  if (!ok) return throw_range(env, "decode: no codec for this word length.");
  size_t count = nbytes / (size_t)width;
  if (nout < count) return throw_range(env, "decode: out is shorter than the samples in bytes.");
  if (is_float && bits == 32) {
    for (size_t i = 0; i < count; i++) {
      float f;
      memcpy(&f, b + 4 * i, 4);
      out[i] = f;
    }
  } else if (is_float) {
    memcpy(out, b, count * 8);
  } else if (bits == 16) {
    for (size_t i = 0; i < count; i++) {
      int16_t v = (int16_t)(uint16_t)(b[2 * i] | (b[2 * i + 1] << 8));
      out[i] = v / 32768.0;
    }
  } else if (bits == 24) {
    decode24(b, count, out);
  } else {
    for (size_t i = 0; i < count; i++) {
      int32_t v;
      memcpy(&v, b + 4 * i, 4);
      out[i] = v / 2147483648.0;
    }
  }
  return NULL;
}

/* ---------------------------------------------------------------- encode */


#define GOLDEN 0x6d2b79f5u
#define BLOCK 512
/* 1.5 · 2^52: (v + ROUNDER) − ROUNDER is v rounded to the nearest integer, halves to even,
 * for |v| < 2^51 (IEEE 754 round-to-nearest); the JavaScript encoder does the same sum. */
#define ROUNDER 6755399441055744.0

/* mulberry32's output for one state; the generator steps its state by GOLDEN per draw,
 * so draw i of a run is mix32(start + (i + 1)·GOLDEN) and a block can be drawn at once. */
static inline uint32_t mix32(uint32_t s) {
  uint32_t t = (s ^ (s >> 15)) * (s | 1u);
  t ^= t + (t ^ (t >> 7)) * (t | 61u);
  return t ^ (t >> 14);
}

/*
 * One block of samples: dither (two draws per sample, as TpdfDither), gain, rounding,
 * clamping; returns the clipped count. Written as plain loops over arrays so the
 * compiler vectorises them.
 */
VECTOR_CLONES
static int64_t quantize_block(const double* x, size_t n, double k, const uint32_t* state, double max, double min, int32_t* q) {
  double d[BLOCK];
  int32_t flag[BLOCK];
  if (state) {
    const uint32_t st = *state;
    for (size_t j = 0; j < n; j++) {
      const uint32_t s1 = st + (uint32_t)(2 * j + 1) * GOLDEN;
      /* u − 2^31 as a signed integer converts exactly and cheaply; the offsets cancel. */
      const int32_t a = (int32_t)(mix32(s1) ^ 0x80000000u);
      const int32_t b = (int32_t)(mix32(s1 + GOLDEN) ^ 0x80000000u);
      d[j] = ((double)a - (double)b) * 0x1p-32;
    }
  } else {
    memset(d, 0, n * sizeof(double));
  }
  for (size_t j = 0; j < n; j++) {
    double v = x[j] * k;
    v += d[j];
    double r = (v + ROUNDER) - ROUNDER;
    flag[j] = (r > max) | (r < min);
    r = r > max ? max : r;
    r = r < min ? min : r;
    r = v == v ? r : 0.0; /* NaN writes 0, as the JavaScript encoder's `NaN & 0xff` does */
    q[j] = (int32_t)r;
  }
  int64_t clipped = 0;
  for (size_t j = 0; j < n; j++) clipped += flag[j];
  return clipped;
}

static napi_value encode(napi_env env, napi_callback_info info) {
  size_t argc = 6;
  napi_value argv[6];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  if (argc < 6) return throw_type(env, "encode(samples, count, gain, bits, dither, out) takes six arguments.");
  size_t nsamples, nout, nstate = 0;
  double* s;
  uint8_t* out;
  int64_t count, bits;
  double gain;
  float* s32 = NULL;
  if (!typed(env, argv[0], napi_float64_array, (void**)&s, &nsamples) && !typed(env, argv[0], napi_float32_array, (void**)&s32, &nsamples))
    return throw_type(env, "encode: samples must be a Float64Array or a Float32Array.");
  if (!typed(env, argv[5], napi_uint8_array, (void**)&out, &nout)) return throw_type(env, "encode: out must be a Uint8Array.");
  if (!get_int(env, argv[1], &count) || count < 0 || (size_t)count > nsamples)
    return throw_range(env, "encode: count must be a whole number within the samples.");
  if (!get_double(env, argv[2], &gain)) return throw_type(env, "encode: gain must be a number.");
  if (!get_int(env, argv[3], &bits) || (bits != 16 && bits != 24 && bits != 32)) return throw_range(env, "encode: bits must be 16, 24 or 32.");
  napi_valuetype dt;
  CHECK(napi_typeof(env, argv[4], &dt));
  uint32_t* state = NULL;
  if (dt != napi_null && dt != napi_undefined) {
    if (!typed(env, argv[4], napi_uint32_array, (void**)&state, &nstate) || nstate < 1)
      return throw_type(env, "encode: dither must be a Uint32Array holding the generator's state, or null.");
  }
  int width = (int)(bits / 8);
  if (nout < (size_t)count * (size_t)width) return throw_range(env, "encode: out is too short.");
  const double scale = ldexp(1.0, (int)bits - 1);
  const double max = scale - 1.0, min = -scale;
  const double k = gain * scale;
  int64_t clipped = 0;
  int32_t q[BLOCK];
  double widened[BLOCK];
  uint32_t st = state ? state[0] : 0;
  for (int64_t at = 0; at < count; at += BLOCK) {
    const size_t n = (size_t)(count - at < BLOCK ? count - at : BLOCK);
    const double* x = s + at;
    if (s32) {
      /* float32 → double is exact: the same sums as on a Float64Array holding these values. */
      for (size_t j = 0; j < n; j++) widened[j] = s32[at + (int64_t)j];
      x = widened;
    }
    clipped += quantize_block(x, n, k, state ? &st : NULL, max, min, q);
    st += (uint32_t)(2 * n) * GOLDEN;
    uint8_t* o = out + (size_t)at * (size_t)width;
    if (width == 3) {
      /* Four-byte stores three bytes apart; the last sample of the block by bytes. */
      for (size_t j = 0; j + 1 < n; j++) memcpy(o + 3 * j, &q[j], 4);
      const uint32_t u = (uint32_t)q[n - 1];
      o[3 * (n - 1)] = (uint8_t)u;
      o[3 * (n - 1) + 1] = (uint8_t)(u >> 8);
      o[3 * (n - 1) + 2] = (uint8_t)(u >> 16);
    } else if (width == 2) {
      for (size_t j = 0; j < n; j++) {
        const int16_t h = (int16_t)q[j];
        memcpy(o + 2 * j, &h, 2);
      }
    } else {
      memcpy(o, q, 4 * n);
    }
  }
  if (state) state[0] = st;
  napi_value result;
  CHECK(napi_create_int64(env, clipped, &result));
  return result;
}

/* ------------------------------------------------------------------ peak */

/* Largest magnitude; NaN is passed over, as by the JavaScript loop. Four running maxima. */
VECTOR_CLONES
static double peak_of(const double* x, size_t count) {
  double m[4] = {0, 0, 0, 0};
  size_t i = 0;
  for (; i + 4 <= count; i += 4) {
    for (int j = 0; j < 4; j++) {
      const double a = fabs(x[i + j]);
      m[j] = a > m[j] ? a : m[j];
    }
  }
  for (; i < count; i++) {
    const double a = fabs(x[i]);
    m[0] = a > m[0] ? a : m[0];
  }
  double best = m[0];
  for (int j = 1; j < 4; j++) best = m[j] > best ? m[j] : best;
  return best;
}

/* The same peak, and every sample rounded to float32 (to nearest, IEEE) into out, in one sweep. */
VECTOR_CLONES
static double peak_and_round(const double* x, size_t count, float* out) {
  double m[4] = {0, 0, 0, 0};
  size_t i = 0;
  for (; i + 4 <= count; i += 4) {
    for (int j = 0; j < 4; j++) {
      const double a = fabs(x[i + j]);
      m[j] = a > m[j] ? a : m[j];
      out[i + j] = (float)x[i + j];
    }
  }
  for (; i < count; i++) {
    const double a = fabs(x[i]);
    m[0] = a > m[0] ? a : m[0];
    out[i] = (float)x[i];
  }
  double best = m[0];
  for (int j = 1; j < 4; j++) best = m[j] > best ? m[j] : best;
  return best;
}

static napi_value peak(napi_env env, napi_callback_info info) {
  size_t argc = 3;
  napi_value argv[3];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  size_t n, nout = 0;
  double* x;
  float* out = NULL;
  int64_t count;
  if (argc < 2 || !typed(env, argv[0], napi_float64_array, (void**)&x, &n)) return throw_type(env, "peak(samples, count): samples must be a Float64Array.");
  if (!get_int(env, argv[1], &count) || count < 0 || (size_t)count > n) return throw_range(env, "peak: count must be a whole number within the samples.");
  if (argc >= 3) {
    napi_valuetype t;
    CHECK(napi_typeof(env, argv[2], &t));
    if (t != napi_undefined && t != napi_null) {
      if (!typed(env, argv[2], napi_float32_array, (void**)&out, &nout)) return throw_type(env, "peak: out32 must be a Float32Array.");
      if (nout < (size_t)count) return throw_range(env, "peak: out32 is shorter than count.");
    }
  }
  const double best = out ? peak_and_round(x, (size_t)count, out) : peak_of(x, (size_t)count);
  napi_value result;
  CHECK(napi_create_double(env, best, &result));
  return result;
}

/* ------------------------------------------------------------- convolver */

/*
 * The plans of one transform size, shared by every convolver of that size and kept for the
 * process (FFTW_MEASURE is costly; the new-array execute functions run a plan on any arrays
 * with the alignment of those it was made on, which fftw_alloc_* guarantees).
 */
typedef struct plan_pair {
  int n, channels;
  fftw_plan forward, backward;
  struct plan_pair* next;
} plan_pair;

static plan_pair* plans = NULL;
/*
 * How hard the planner looks. FFTW_PATIENT was tried: about 8 % off the filter's time at the
 * render's size, for some 20 s of planning per size instead of about 1 s; not worth it.
 */
static const unsigned planner_effort = FFTW_MEASURE;
/* Plans measured (not read from wisdom) since the wisdom was last exported. */
static int unsaved_plans = 0;

/* The plans for size n and this channel count: from the cache, else from wisdom, else measured. */
static plan_pair* plans_for(int n, int channels) {
  for (plan_pair* p = plans; p; p = p->next)
    if (p->n == n && p->channels == channels) return p;
  plan_pair* p = calloc(1, sizeof *p);
  if (!p) return NULL;
  const size_t bins = channels == 2 ? (size_t)n : (size_t)n / 2 + 1;
  /* Scratch arrays of the convolvers' own kinds: FFTW_MEASURE overwrites what it plans on. */
  double* x = fftw_alloc_real((size_t)n * (size_t)channels);
  double* y = fftw_alloc_real((size_t)n * (size_t)channels);
  fftw_complex* X = fftw_alloc_complex(bins);
  if (x && y && X) {
    for (int attempt = 0; attempt < 2 && !(p->forward && p->backward); attempt++) {
      const unsigned flags = planner_effort | (attempt == 0 ? FFTW_WISDOM_ONLY : 0);
      if (p->forward) fftw_destroy_plan(p->forward);
      if (p->backward) fftw_destroy_plan(p->backward);
      if (channels == 2) {
        p->forward = fftw_plan_dft_1d(n, (fftw_complex*)x, X, FFTW_FORWARD, flags);
        p->backward = fftw_plan_dft_1d(n, X, (fftw_complex*)y, FFTW_BACKWARD, flags);
      } else {
        p->forward = fftw_plan_dft_r2c_1d(n, x, X, flags);
        p->backward = fftw_plan_dft_c2r_1d(n, X, y, flags);
      }
      if (attempt == 1 && p->forward && p->backward) unsaved_plans++;
    }
  }
  fftw_free(x);
  fftw_free(y);
  fftw_free(X);
  if (!p->forward || !p->backward) {
    if (p->forward) fftw_destroy_plan(p->forward);
    if (p->backward) fftw_destroy_plan(p->backward);
    free(p);
    return NULL;
  }
  p->n = n;
  p->channels = channels;
  p->next = plans;
  plans = p;
  return p;
}

typedef struct {
  int channels;     /* 1: real transforms; 2: left in the real part, right in the imaginary */
  int taps;
  int n;            /* FFT size */
  int hist;         /* taps − 1 frames carried across calls */
  int block;        /* new frames per transform: n − hist */
  double* x;        /* time frame: n reals (mono) or n complex (stereo, interleaved) */
  fftw_complex* X;  /* spectrum work */
  double* y;        /* filtered frame, same layout as x */
  fftw_complex* H;  /* the filter's spectrum, scaled by 1/n */
  const plan_pair* plans; /* shared, kept for the process */
  double* history;  /* hist frames, interleaved */
} convolver;

/* x → X and X → y with the shared plans, on this convolver's arrays. */
static void forward(convolver* c) {
  if (c->channels == 2) fftw_execute_dft(c->plans->forward, (fftw_complex*)c->x, c->X);
  else fftw_execute_dft_r2c(c->plans->forward, c->x, c->X);
}

static void backward(convolver* c) {
  if (c->channels == 2) fftw_execute_dft(c->plans->backward, c->X, (fftw_complex*)c->y);
  else fftw_execute_dft_c2r(c->plans->backward, c->X, c->y);
}

static void convolver_free(napi_env env, void* data, void* hint) {
  (void)env;
  (void)hint;
  convolver* c = data;
  if (!c) return;
  fftw_free(c->x);
  fftw_free(c->X);
  fftw_free(c->y);
  fftw_free(c->H);
  free(c->history);
  free(c);
}

static napi_value convolver_new(napi_env env, napi_callback_info info) {
  size_t argc = 3;
  napi_value argv[3], self;
  CHECK(napi_get_cb_info(env, info, &argc, argv, &self, NULL));
  if (argc < 3) return throw_type(env, "new Convolver(taps, channels, fftSize) takes three arguments.");
  size_t ntaps;
  double* taps;
  int64_t channels, n;
  if (!typed(env, argv[0], napi_float64_array, (void**)&taps, &ntaps) || ntaps < 1) return throw_type(env, "Convolver: taps must be a non-empty Float64Array.");
  if (!get_int(env, argv[1], &channels) || (channels != 1 && channels != 2)) return throw_range(env, "Convolver: channels must be 1 or 2.");
  if (!get_int(env, argv[2], &n) || n < 2 || n > (1 << 26) || (n & (n - 1)) != 0 || (size_t)n < ntaps) {
    return throw_range(env, "Convolver: fftSize must be a power of two at least as long as the filter.");
  }
  convolver* c = calloc(1, sizeof *c);
  if (!c) return throw_range(env, "Convolver: out of memory.");
  c->channels = (int)channels;
  c->taps = (int)ntaps;
  c->n = (int)n;
  c->hist = c->taps - 1;
  c->block = c->n - c->hist;
  size_t bins = channels == 2 ? (size_t)n : (size_t)n / 2 + 1;
  c->x = fftw_alloc_real((size_t)n * (size_t)channels);
  c->y = fftw_alloc_real((size_t)n * (size_t)channels);
  c->X = fftw_alloc_complex(bins);
  c->H = fftw_alloc_complex(bins);
  c->history = calloc((size_t)(c->hist > 0 ? c->hist : 1) * (size_t)channels, sizeof(double));
  if (!c->x || !c->y || !c->X || !c->H || !c->history) {
    convolver_free(env, c, NULL);
    return throw_range(env, "Convolver: out of memory.");
  }
  c->plans = plans_for((int)n, (int)channels);
  if (!c->plans) {
    convolver_free(env, c, NULL);
    return throw_range(env, "Convolver: FFTW could not plan this size.");
  }
  /* The filter's spectrum, scaled by 1/n so the inverse transform needs no pass of its own. */
  memset(c->x, 0, sizeof(double) * (size_t)n * (size_t)channels);
  if (channels == 2) {
    for (size_t i = 0; i < ntaps; i++) c->x[2 * i] = taps[i];
  } else {
    for (size_t i = 0; i < ntaps; i++) c->x[i] = taps[i];
  }
  forward(c);
  const double inv = 1.0 / (double)n;
  for (size_t k = 0; k < bins; k++) {
    c->H[k][0] = c->X[k][0] * inv;
    c->H[k][1] = c->X[k][1] * inv;
  }
  if (napi_wrap(env, self, c, convolver_free, NULL, NULL) != napi_ok) {
    convolver_free(env, c, NULL);
    return throw_range(env, "Convolver: could not attach to its object.");
  }
  return self;
}

/* X ← X·H, bin by bin (the same products and sums as the JavaScript convolver's). */
VECTOR_CLONES
static void multiply(fftw_complex* restrict X, const fftw_complex* restrict H, size_t bins) {
  for (size_t k = 0; k < bins; k++) {
    const double re = X[k][0] * H[k][0] - X[k][1] * H[k][1];
    const double im = X[k][0] * H[k][1] + X[k][1] * H[k][0];
    X[k][0] = re;
    X[k][1] = im;
  }
}

/* One transform: frames [history | m new frames | zeros] → m filtered frames. */
static void convolve_piece(convolver* c, const double* in, size_t m, double* out) {
  const int ch = c->channels;
  const size_t h = (size_t)c->hist, n = (size_t)c->n;
  double* x = c->x;
  memcpy(x, c->history, h * ch * sizeof(double));
  memcpy(x + h * ch, in, m * ch * sizeof(double));
  memset(x + (h + m) * ch, 0, (n - h - m) * ch * sizeof(double));
  /* The last h frames of [history | piece] are the next call's history. */
  memcpy(c->history, x + m * ch, h * ch * sizeof(double));
  forward(c);
  multiply(c->X, (const fftw_complex*)c->H, ch == 2 ? n : n / 2 + 1);
  backward(c);
  memcpy(out, c->y + h * ch, m * ch * sizeof(double));
}

static napi_value convolver_process(napi_env env, napi_callback_info info) {
  size_t argc = 4;
  napi_value argv[4], self;
  CHECK(napi_get_cb_info(env, info, &argc, argv, &self, NULL));
  convolver* c;
  if (napi_unwrap(env, self, (void**)&c) != napi_ok || !c) return throw_type(env, "process: not a Convolver.");
  if (argc < 3) return throw_type(env, "process(input, frames, output) takes three arguments.");
  size_t nin, nout;
  double* in;
  double* out;
  int64_t frames;
  if (!typed(env, argv[0], napi_float64_array, (void**)&in, &nin)) return throw_type(env, "process: input must be a Float64Array.");
  if (!typed(env, argv[2], napi_float64_array, (void**)&out, &nout)) return throw_type(env, "process: output must be a Float64Array.");
  if (!get_int(env, argv[1], &frames) || frames < 0) return throw_range(env, "process: frames must be a whole number.");
  const size_t need = (size_t)frames * (size_t)c->channels;
  if (nin < need || nout < need) return throw_range(env, "process: input and output must hold frames × channels samples.");
  /* With peakFrom: also the peak of the output from that frame on, taken while it is in cache. */
  int64_t peak_from = -1;
  if (argc >= 4) {
    napi_valuetype t;
    CHECK(napi_typeof(env, argv[3], &t));
    if (t != napi_undefined && (!get_int(env, argv[3], &peak_from) || peak_from < 0))
      return throw_range(env, "process: peakFrom must be a whole number of frames.");
  }
  const size_t ch = (size_t)c->channels;
  double best = 0;
  size_t done = 0;
  while (done < (size_t)frames) {
    size_t m = (size_t)frames - done;
    if (m > (size_t)c->block) m = (size_t)c->block;
    convolve_piece(c, in + done * ch, m, out + done * ch);
    if (peak_from >= 0 && done + m > (size_t)peak_from) {
      const size_t from = (size_t)peak_from > done ? (size_t)peak_from : done;
      const double p = peak_of(out + from * ch, (done + m - from) * ch);
      best = p > best ? p : best;
    }
    done += m;
  }
  if (peak_from < 0) return NULL;
  napi_value result;
  CHECK(napi_create_double(env, best, &result));
  return result;
}

static napi_value convolver_reset(napi_env env, napi_callback_info info) {
  napi_value self;
  CHECK(napi_get_cb_info(env, info, NULL, NULL, &self, NULL));
  convolver* c;
  if (napi_unwrap(env, self, (void**)&c) != napi_ok || !c) return throw_type(env, "reset: not a Convolver.");
  memset(c->history, 0, (size_t)(c->hist > 0 ? c->hist : 1) * (size_t)c->channels * sizeof(double));
  return NULL;
}

/* ---------------------------------------------------------------- memory */

/*
 * A trimmed render keeps up to a gigabyte of filtered signal. Taken as ordinary 4 KiB pages,
 * each first touch is a page fault (a quarter of a million of them for 1 GiB), which costs
 * more than the filtering itself on a virtual machine; so it is taken 2 MiB-aligned and
 * offered to the kernel for transparent huge pages (madvise: a hint, harmless where refused).
 * release(buffer) detaches the ArrayBuffer, so no view can reach the memory again, and frees it
 * at once; a buffer never released is freed when the garbage collector finalizes it.
 */
#define HUGE_PAGE ((size_t)2 << 20)

/* The blocks handed out and not yet freed: release() frees one at once, the GC's finalizer otherwise. */
typedef struct block {
  void* data; /* NULL once freed */
  struct block* next;
} block;

static block* blocks = NULL;

static void forget_block(block* b) {
  for (block** at = &blocks; *at; at = &(*at)->next) {
    if (*at == b) {
      *at = b->next;
      break;
    }
  }
  free(b);
}

static void finalize_block(napi_env env, void* data, void* hint) {
  (void)env;
  (void)data;
  block* b = hint;
  free(b->data); /* NULL when release() freed it already */
  forget_block(b);
}

static napi_value allocate(napi_env env, napi_callback_info info) {
  size_t argc = 1;
  napi_value argv[1];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  int64_t bytes;
  if (argc < 1 || !get_int(env, argv[0], &bytes) || bytes < 1 || bytes > ((int64_t)1 << 40))
    return throw_range(env, "allocate(bytes): bytes must be a positive whole number.");
  void* data = NULL;
  const size_t size = ((size_t)bytes + HUGE_PAGE - 1) / HUGE_PAGE * HUGE_PAGE;
  block* b = calloc(1, sizeof *b);
  if (!b || posix_memalign(&data, HUGE_PAGE, size) != 0 || !data) {
    free(b);
    return throw_range(env, "allocate: out of memory.");
  }
#ifdef MADV_HUGEPAGE
  madvise(data, size, MADV_HUGEPAGE);
#endif
  b->data = data;
  b->next = blocks;
  blocks = b;
  napi_value buffer;
  if (napi_create_external_arraybuffer(env, data, (size_t)bytes, finalize_block, b, &buffer) != napi_ok) {
    free(data);
    forget_block(b);
    return throw_range(env, "allocate: could not make an ArrayBuffer of this memory.");
  }
  return buffer;
}

static block* block_of(void* data) {
  for (block* b = blocks; b; b = b->next)
    if (b->data == data) return b;
  return NULL;
}

static napi_value release(napi_env env, napi_callback_info info) {
  size_t argc = 1;
  napi_value argv[1];
  CHECK(napi_get_cb_info(env, info, &argc, argv, NULL, NULL));
  bool is = false;
  if (argc < 1 || napi_is_arraybuffer(env, argv[0], &is) != napi_ok || !is) return throw_type(env, "release(buffer): buffer must be an ArrayBuffer.");
  bool detached = false;
  CHECK(napi_is_detached_arraybuffer(env, argv[0], &detached));
  if (detached) return NULL;
  void* data = NULL;
  size_t length = 0;
  CHECK(napi_get_arraybuffer_info(env, argv[0], &data, &length));
  if (!block_of(data)) return throw_type(env, "release: this buffer did not come from allocate.");
  /* Detached first, so no view reaches the memory; then freed, unless the detach let it go already. */
  CHECK(napi_detach_arraybuffer(env, argv[0]));
  block* b = block_of(data);
  if (b) {
    b->data = NULL;
    free(data);
  }
  return NULL;
}

/* ---------------------------------------------------------------- wisdom */

/* The wisdom file's path, the call's one argument: false when it is not a string that fits. */
static bool wisdom_path(napi_env env, napi_callback_info info, char* path, size_t size) {
  size_t argc = 1;
  napi_value argv[1];
  size_t len;
  return napi_get_cb_info(env, info, &argc, argv, NULL, NULL) == napi_ok && argc >= 1 &&
         napi_get_value_string_utf8(env, argv[0], path, size, &len) == napi_ok && len < size - 1;
}

/* importWisdom(path): true when FFTW read the file (a missing or foreign file leaves the planner as it was). */
static napi_value import_wisdom(napi_env env, napi_callback_info info) {
  char path[4096];
  if (!wisdom_path(env, info, path, sizeof path)) return throw_type(env, "importWisdom(path): path must be a string.");
  const int ok = fftw_import_wisdom_from_filename(path);
  napi_value result;
  CHECK(napi_get_boolean(env, ok != 0, &result));
  return result;
}

/* exportWisdom(path): writes everything the planner knows; true when written (the plans count as saved). */
static napi_value export_wisdom(napi_env env, napi_callback_info info) {
  char path[4096];
  if (!wisdom_path(env, info, path, sizeof path)) return throw_type(env, "exportWisdom(path): path must be a string.");
  const int ok = fftw_export_wisdom_to_filename(path);
  if (ok) unsaved_plans = 0;
  napi_value result;
  CHECK(napi_get_boolean(env, ok != 0, &result));
  return result;
}

static napi_value unsaved(napi_env env, napi_callback_info info) {
  (void)info;
  napi_value result;
  CHECK(napi_create_int32(env, unsaved_plans, &result));
  return result;
}

/* ---------------------------------------------------------------- module */

static napi_value init(napi_env env, napi_value exports) {
  napi_property_descriptor fns[] = {
      {"decode", NULL, decode, NULL, NULL, NULL, napi_enumerable, NULL},
      {"encode", NULL, encode, NULL, NULL, NULL, napi_enumerable, NULL},
      {"peak", NULL, peak, NULL, NULL, NULL, napi_enumerable, NULL},
      {"importWisdom", NULL, import_wisdom, NULL, NULL, NULL, napi_enumerable, NULL},
      {"exportWisdom", NULL, export_wisdom, NULL, NULL, NULL, napi_enumerable, NULL},
      {"unsavedPlans", NULL, unsaved, NULL, NULL, NULL, napi_enumerable, NULL},
      {"allocate", NULL, allocate, NULL, NULL, NULL, napi_enumerable, NULL},
      {"release", NULL, release, NULL, NULL, NULL, napi_enumerable, NULL},
  };
  CHECK(napi_define_properties(env, exports, sizeof fns / sizeof fns[0], fns));
  /* A bound on planning one size (FFTW_MEASURE takes about 1 s at 2^15 points, 3 s at 2^16, here):
   * past it, FFTW keeps the best plan found so far. */
  fftw_set_timelimit(30.0);
  napi_property_descriptor methods[] = {
      {"process", NULL, convolver_process, NULL, NULL, NULL, napi_default, NULL},
      {"reset", NULL, convolver_reset, NULL, NULL, NULL, napi_default, NULL},
  };
  napi_value cls;
  CHECK(napi_define_class(env, "Convolver", NAPI_AUTO_LENGTH, convolver_new, NULL, 2, methods, &cls));
  CHECK(napi_set_named_property(env, exports, "Convolver", cls));
  napi_value version;
  CHECK(napi_create_string_utf8(env, fftw_version, NAPI_AUTO_LENGTH, &version));
  CHECK(napi_set_named_property(env, exports, "fftwVersion", version));
  return exports;
}

NAPI_MODULE(NODE_GYP_MODULE_NAME, init)
