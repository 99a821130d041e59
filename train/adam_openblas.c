//go:build openblas && cgo

// The Adam step of adamSliceGo (adam.go) in C, vectorised with AVX-512 or
// AVX2 where the CPU has it (chosen once at start-up, so the binary still
// runs on any x86-64), for the openblas build.
//
// The moments m and v go through the same IEEE 754 operations in the same
// order as in the Go loop, so they are the same bits (fp-contract=off
// forbids gcc to fuse a·b+c into one FMA; Go with its default GOAMD64=v1
// does not fuse either). The step lr·(m/bc1)/(√(v/bc2) + ε) is the same
// formula with the bias corrections folded into two constants, c1 = lr/bc1
// and ibc2 = 1/bc2: (m·c1)/(√(v·ibc2) + ε), one division and one square
// root per entry instead of three divisions and one — the vector divider is
// what limits this loop. It differs from the Go loop's step by a few units
// in the last place (adam_openblas_test.go states the bound); every
// instruction set and thread count gives the same bits as the scalar C
// loop. The square root is the vsqrtpd instruction, written as an
// intrinsic: gcc does not vectorise sqrt() under its default -fmath-errno,
// which cgo's flags cannot turn off.
#pragma GCC optimize("O3", "fp-contract=off")

#include <stdint.h>
#include <string.h>
#include <math.h>
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#include <immintrin.h>
#define TM_X86 1
#endif

#define TM_CHUNK 64

// tm_adam_scalar is the Go loop, entry by entry.
static void tm_adam_scalar(double *w, const double *g, double *m, double *v, long j0, long j1, double b1, double b2,
                           double eps, double c1, double ibc2, double wd, int decay) {
	for (long j = j0; j < j1; j++) {
		double gj = g[j];
		if (gj == 0 && !decay && m[j] == 0 && v[j] == 0) continue;
		double mj = b1 * m[j] + (1 - b1) * gj;
		double vj = b2 * v[j] + (1 - b2) * gj * gj;
		m[j] = mj;
		v[j] = vj;
		double step = (mj * c1) / (sqrt(vj * ibc2) + eps);
		if (decay) step += wd * w[j];
		w[j] -= step;
	}
}

#ifdef TM_X86
// TM_ADAM_VEC processes entries j.. in vectors of L doubles (vector type VD,
// integer vector VI, square root SQRT) while a whole vector fits below j1.
// An entry whose g, m and v are all 0 (without decay) keeps its old w, m
// and v, as in the Go loop: the new values are computed and discarded.
#define TM_ADAM_VEC(VD, VI, L, SQRT)                                                         \
	for (; j + L <= j1; j += L) {                                                        \
		VD gj, mo, vo, wo;                                                           \
		memcpy(&gj, g + j, sizeof gj);                                               \
		memcpy(&mo, m + j, sizeof mo);                                               \
		memcpy(&vo, v + j, sizeof vo);                                               \
		memcpy(&wo, w + j, sizeof wo);                                               \
		VD mj = b1 * mo + (1 - b1) * gj;                                             \
		VD vj = b2 * vo + (1 - b2) * gj * gj;                                        \
		VD step = (mj * c1) / (SQRT(vj * ibc2) + eps);                              \
		if (decay) step += wd * wo;                                                  \
		VD wn = wo - step;                                                           \
		VI keep = (VI){0};                                                           \
		if (!decay) keep = (gj == 0) & (mo == 0) & (vo == 0);                        \
		VI mb = (keep & (VI)mo) | (~keep & (VI)mj);                                  \
		VI vb = (keep & (VI)vo) | (~keep & (VI)vj);                                  \
		VI wb = (keep & (VI)wo) | (~keep & (VI)wn);                                  \
		memcpy(m + j, &mb, sizeof mb);                                               \
		memcpy(v + j, &vb, sizeof vb);                                               \
		memcpy(w + j, &wb, sizeof wb);                                               \
	}

typedef double tm_v8d __attribute__((vector_size(64)));
typedef long long tm_v8i __attribute__((vector_size(64)));
typedef double tm_v4d __attribute__((vector_size(32)));
typedef long long tm_v4i __attribute__((vector_size(32)));

__attribute__((target("avx512f"))) static tm_v8d tm_sqrt8(tm_v8d x) { return (tm_v8d)_mm512_sqrt_pd((__m512d)x); }
__attribute__((target("avx2"))) static tm_v4d tm_sqrt4(tm_v4d x) { return (tm_v4d)_mm256_sqrt_pd((__m256d)x); }

__attribute__((target("avx512f"))) static void tm_adam_avx512(double *w, const double *g, double *m, double *v, long j0,
                                                              long j1, double b1, double b2, double eps, double c1,
                                                              double ibc2, double wd, int decay) {
	long j = j0;
	TM_ADAM_VEC(tm_v8d, tm_v8i, 8, tm_sqrt8)
	tm_adam_scalar(w, g, m, v, j, j1, b1, b2, eps, c1, ibc2, wd, decay);
}

__attribute__((target("avx2"))) static void tm_adam_avx2(double *w, const double *g, double *m, double *v, long j0,
                                                         long j1, double b1, double b2, double eps, double c1,
                                                         double ibc2, double wd, int decay) {
	long j = j0;
	TM_ADAM_VEC(tm_v4d, tm_v4i, 4, tm_sqrt4)
	tm_adam_scalar(w, g, m, v, j, j1, b1, b2, eps, c1, ibc2, wd, decay);
}
#endif

// tm_adam_level is 2 with AVX-512, 1 with AVX2, else 0 (set by tm_adam_init).
static int tm_adam_level;

void tm_adam_init(void) {
#ifdef TM_X86
	__builtin_cpu_init();
	tm_adam_level = __builtin_cpu_supports("avx512f") ? 2 : __builtin_cpu_supports("avx2") ? 1 : 0;
#endif
}

int tm_adam_isa(void) { return tm_adam_level; }

// tm_adam applies the step to n entries; isa ≥ 0 caps the instruction set
// (for tests), −1 takes the best the CPU has. Without decay, chunks of
// TM_CHUNK entries whose g, m and v are all +0 are skipped outright.
void tm_adam(double *w, const double *g, double *m, double *v, long n, double b1, double b2, double eps, double lr,
             double bc1, double bc2, double wd, int decay, int isa) {
	int lv = isa >= 0 && isa < tm_adam_level ? isa : tm_adam_level;
	double k1 = lr / bc1, ibc2 = 1 / bc2;
	for (long c0 = 0; c0 < n; c0 += TM_CHUNK) {
		long e0 = c0 + TM_CHUNK < n ? c0 + TM_CHUNK : n;
		if (!decay) {
			uint64_t any = 0;
			for (long j = c0; j < e0; j++) {
				uint64_t a, b, c;
				memcpy(&a, &g[j], 8);
				memcpy(&b, &m[j], 8);
				memcpy(&c, &v[j], 8);
				any |= a | b | c;
			}
			if (any == 0) continue;
		}
#ifdef TM_X86
		if (lv == 2) {
			tm_adam_avx512(w, g, m, v, c0, e0, b1, b2, eps, k1, ibc2, wd, decay);
			continue;
		}
		if (lv == 1) {
			tm_adam_avx2(w, g, m, v, c0, e0, b1, b2, eps, k1, ibc2, wd, decay);
			continue;
		}
#endif
		tm_adam_scalar(w, g, m, v, c0, e0, b1, b2, eps, k1, ibc2, wd, decay);
	}
}

// tm_sumsq returns Σ g_j² in 8 interleaved partial sums (gcc's generic
// vectors; the Go loop sums in order, so the two differ in rounding).
typedef double tm_s8d __attribute__((vector_size(64)));
double tm_sumsq(const double *g, long n) {
	tm_s8d s = {0};
	long j = 0;
	for (; j + 8 <= n; j += 8) {
		tm_s8d x;
		memcpy(&x, g + j, sizeof x);
		s += x * x;
	}
	double t = 0;
	for (; j < n; j++) t += g[j] * g[j];
	return (((s[0] + s[1]) + (s[2] + s[3])) + ((s[4] + s[5]) + (s[6] + s[7]))) + t;
}
