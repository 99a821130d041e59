//go:build openblas && cgo

// Elementwise loops of the openblas build, in C so that gcc vectorises them
// (AVX-512 — the x86-64-v4 level, with the byte instructions the uint8 states need — or
// AVX2 where the CPU has it, chosen at load time by target_clones, so the
// binary still runs on any x86-64). The pure-Go
// build runs the Go loops of loops.go instead; vec_openblas.go calls these
// once per large slice, never per element.
//
// fp-contract=off keeps gcc from fusing a·b+c into one FMA, so every loop
// here except the exponential ones rounds exactly as its Go counterpart
// (Go on amd64 does not fuse either) and gives bit-identical results;
// no-math-errno and no-trapping-math (Go never reads the floating-point
// exception flags) let gcc vectorise the comparisons and selects.
#pragma GCC optimize("O3", "no-math-errno", "fp-contract=off", "no-trapping-math")

#include <math.h>
#include <stdint.h>
#include <string.h>

#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#define CLONES __attribute__((target_clones("arch=x86-64-v4", "avx2", "default")))
#else
#define CLONES
#endif

// tm_expneg is e^x for x ≤ 0 (NaN passes through), written so that gcc can
// vectorise a loop of it: the range reduction and rational approximation
// of S. L. Moshier's Cephes exp (Cephes Mathematical Library, 1984–2000,
// exp.c; also in Moshier, "Methods and Programs for Mathematical
// Functions", Ellis Horwood 1989): x = n·ln2 + r with |r| ≤ ln2/2 (ln2 split
// in two parts, C1 exact in few bits), e^r = 1 + 2r·P(r²)/(Q(r²) − r·P(r²)),
// then scaled by 2^n built from its exponent bits. n is rounded to nearest
// by adding and subtracting 1.5·2^52 instead of calling floor. Below −708
// the result would be subnormal and is returned as 0 (absolute error below
// 3.4e-308). Relative error against Go's math.Exp is checked in
// vec_openblas_test.go.
static inline double tm_expneg(double x) {
	const double LOG2E = 1.4426950408889634073599;
	const double C1 = 6.93145751953125E-1;
	const double C2 = 1.42860682030941723212E-6;
	const double SHIFT = 6755399441055744.0; // 1.5·2^52
	const double P0 = 1.26177193074810590878E-4, P1 = 3.02994407707441961300E-2, P2 = 9.99999999999999999910E-1;
	const double Q0 = 3.00198505138664455042E-6, Q1 = 2.52448340349684104192E-3, Q2 = 2.27265548208155028766E-1,
	             Q3 = 2.00000000000000000009E0;
	int under = x < -708.0;
	double xc = under ? -708.0 : x;
	double t = xc * LOG2E + SHIFT;
	double fn = t - SHIFT;
	int64_t tb, sb;
	memcpy(&tb, &t, 8);
	double shift = SHIFT;
	memcpy(&sb, &shift, 8);
	int64_t eb = (tb - sb + 1023) << 52;
	double scale;
	memcpy(&scale, &eb, 8);
	double r = xc - fn * C1;
	r = r - fn * C2;
	double rr = r * r;
	double px = r * ((P0 * rr + P1) * rr + P2);
	double qx = ((Q0 * rr + Q1) * rr + Q2) * rr + Q3;
	double y = px / (qx - px);
	y = 1.0 + 2.0 * y;
	y = y * scale;
	return under ? 0.0 : y;
}

// tm_expneg_n writes e^x[k] (x[k] ≤ 0) for n values, for the accuracy test.
CLONES void tm_expneg_n(double *dst, const double *x, long n) {
	for (long k = 0; k < n; k++) dst[k] = tm_expneg(x[k]);
}

// tm_log12 is log(x) for 1 ≤ x ≤ 2 (NaN passes through), vectorisable:
// Moshier's Cephes log (Cephes Mathematical Library, log.c) on this range,
// x = 2^f·m with f ∈ {0, 1} and m ∈ [√½, √2], log(1+z) = z − z²/2 +
// z³·P(z)/Q(z) for z = m − 1 (exact), ln2 split in two parts.
static inline double tm_log12(double x) {
	const double P0 = 1.01875663804580931796E-4, P1 = 4.97494994976747001425E-1, P2 = 4.70579119878881725854E0,
	             P3 = 1.44989225341610930846E1, P4 = 1.79368678507819816313E1, P5 = 7.70838733755885391666E0;
	const double Q1 = 1.12873587189167450590E1, Q2 = 4.52279145837532221105E1, Q3 = 8.29875266912776603211E1,
	             Q4 = 7.11544750618563894466E1, Q5 = 2.31251620126765340583E1;
	int big = x > 1.41421356237309504880;
	double m = big ? x * 0.5 : x;
	double fe = big ? 1.0 : 0.0;
	double z = m - 1.0;
	double zz = z * z;
	double px = ((((P0 * z + P1) * z + P2) * z + P3) * z + P4) * z + P5;
	double qx = ((((z + Q1) * z + Q2) * z + Q3) * z + Q4) * z + Q5;
	double y = z * (zz * px / qx);
	y = y - fe * 2.121944400546905827679e-4;
	y = y - 0.5 * zz;
	double r = z + y;
	return r + fe * 0.693359375;
}

// tm_softplus is log(1+e^v) = max(v, 0) + log(1 + e^−|v|), as Go's
// softplus (kernel.go) computes it, with the exponential and logarithm above.
static inline double tm_softplus(double v) {
	double mz = v > 0 ? v : 0.0;
	return mz + tm_log12(1.0 + tm_expneg(-fabs(v)));
}

// tm_expm1neg is e^−o − 1 for o ≥ 0: a Taylor series below 1/4 (13 terms,
// truncation below 3e-17 relative), else e^−o − 1, whose cancellation then
// costs at most a factor 1/(1−e^−¼) ≈ 4.5 in relative error.
static inline double tm_expm1neg(double o) {
	double x = -o;
	double t = 1.0 / 6227020800.0; // 1/13!
	t = t * x + 1.0 / 479001600.0;
	t = t * x + 1.0 / 39916800.0;
	t = t * x + 1.0 / 3628800.0;
	t = t * x + 1.0 / 362880.0;
	t = t * x + 1.0 / 40320.0;
	t = t * x + 1.0 / 5040.0;
	t = t * x + 1.0 / 720.0;
	t = t * x + 1.0 / 120.0;
	t = t * x + 1.0 / 24.0;
	t = t * x + 1.0 / 6.0;
	t = t * x + 0.5;
	t = t * x + 1.0;
	double series = t * x;
	return o < 0.25 ? series : tm_expneg(x) - 1.0;
}

// tm_softplus_n writes softplus(v[k]) for n values, for the accuracy test.
CLONES void tm_softplus_n(double *dst, const double *v, long n) {
	for (long k = 0; k < n; k++) dst[k] = tm_softplus(v[k]);
}

// tm_expm1neg_n writes e^−o[k] − 1 for n values o[k] ≥ 0, for the test.
CLONES void tm_expm1neg_n(double *dst, const double *o, long n) {
	for (long k = 0; k < n; k++) dst[k] = tm_expm1neg(o[k]);
}

#define PROD_TERMS 512

// tm_v8d is a vector of 8 doubles (gcc's generic vectors: one AVX-512
// register, two AVX2 or four SSE2 ones), for the interleaved partial sums
// and products below, which gcc would not vectorise as written in scalar
// code without reassociating.
typedef double tm_v8d __attribute__((vector_size(64)));

// tm_rowsum returns Σ_k t_k − Σ_k log(1+e_k) of one row of n sites, t_k =
// x_k·z_k − max(z_k, 0) and e_k = e^−|z_k| given, so that with softplus(z) =
// max(z, 0) + log(1+e^−|z|) it is Σ_k x_k·z_k − softplus(z_k). The sums run
// in 8 interleaved partial sums (the pure-Go loop sums in site order, so
// the two differ in rounding), and the logarithms are taken of products of
// up to PROD_TERMS factors 1+e ∈ (1, 2] (at most 2^512), as in the Go loop.
static inline double tm_rowsum(const double *t, const double *e, long n) {
	tm_v8d s = {0};
	double tail = 0.0, logs = 0.0;
	for (long b0 = 0; b0 < n; b0 += PROD_TERMS) {
		long b1 = b0 + PROD_TERMS < n ? b0 + PROD_TERMS : n;
		tm_v8d p = {1, 1, 1, 1, 1, 1, 1, 1};
		long k = b0;
		for (; k + 8 <= b1; k += 8) {
			tm_v8d tv, ev;
			memcpy(&tv, t + k, sizeof tv);
			memcpy(&ev, e + k, sizeof ev);
			s += tv;
			p *= 1.0 + ev;
		}
		double q = 1.0;
		for (; k < b1; k++) {
			tail += t[k];
			q *= 1.0 + e[k];
		}
		q *= ((p[0] * p[1]) * (p[2] * p[3])) * ((p[4] * p[5]) * (p[6] * p[7]));
		logs += log(q);
	}
	return ((((s[0] + s[1]) + (s[2] + s[3])) + ((s[4] + s[5]) + (s[6] + s[7]))) + tail) - logs;
}

// tm_bern_fwd is the forward pass of the training graph's q = 2
// log-likelihood: for each of rows rows of n sites, e = e^−|z| (kept for the
// gradient) and lp_i = Σ_k x·z − softplus(z), x 0/1; t is scratch of n
// values.
CLONES void tm_bern_fwd(double *lp, double *e, double *t, const double *x, const double *z, long rows, long n) {
	for (long i = 0; i < rows; i++) {
		const double *zi = z + i * n, *xi = x + i * n;
		double *ei = e + i * n;
		for (long k = 0; k < n; k++) {
			double zz = zi[k];
			ei[k] = tm_expneg(-fabs(zz));
			t[k] = xi[k] * zz - (zz > 0 ? zz : 0.0);
		}
		lp[i] = tm_rowsum(t, ei, n);
	}
}

// tm_bern_bwd is its gradient dz = g_i·(x − σ(z)), σ(z) from e = e^−|z|:
// 1/(1+e) for z ≥ 0, e/(1+e) below (the same arithmetic as the Go loop).
CLONES void tm_bern_bwd(double *dz, const double *x, const double *z, const double *e, const double *g, long rows, long n) {
	for (long i = 0; i < rows; i++) {
		double gi = g[i];
		const double *xi = x + i * n, *zi = z + i * n, *ei = e + i * n;
		double *d = dz + i * n;
		for (long k = 0; k < n; k++) {
			double s = 1.0 / (1.0 + ei[k]);
			s = zi[k] < 0 ? s * ei[k] : s;
			d[k] = gi * (xi[k] - s);
		}
	}
}

// tm_rowlp2 is the scoring kernel's q = 2 log-likelihood of rows snapshots
// of n sites (uint8 states, flipped when flip is set) from logits z with row
// stride zs; scratch holds 2n values.
CLONES void tm_rowlp2(double *dst, const double *z, long zs, const uint8_t *x, long n, long rows, int flip, double *scratch) {
	double *e = scratch, *t = scratch + n;
	for (long i = 0; i < rows; i++) {
		const double *zi = z + i * zs;
		const uint8_t *xi = x + i * n;
		for (long k = 0; k < n; k++) {
			double zz = zi[k];
			e[k] = tm_expneg(-fabs(zz));
			t[k] = (((xi[k] == 1) != flip) ? zz : 0.0) - (zz > 0 ? zz : 0.0);
		}
		dst[i] = tm_rowsum(t, e, n);
	}
}

// tm_states32 writes the 0/1 inputs of n site values as float32: 1 where
// (x == 1) differs from flip.
CLONES void tm_states32(float *dst, const uint8_t *x, long n, int flip) {
	for (long k = 0; k < n; k++) dst[k] = ((x[k] == 1) != flip) ? 1.0f : 0.0f;
}

// relu0 is Go's max(v, 0): NaN stays NaN, −0 becomes +0.
static inline double relu0(double v) { return v <= 0 ? 0.0 : v; }

// tm_to32 is dst[k] = float32(src[k]).
CLONES void tm_to32(float *dst, const double *src, long n) {
	for (long k = 0; k < n; k++) dst[k] = (float)src[k];
}

// tm_to64 is dst[k] = float64(src[k]), or dst[k] += float64(src[k]) with acc.
CLONES void tm_to64(double *dst, const float *src, long n, int acc) {
	if (acc) {
		for (long k = 0; k < n; k++) dst[k] += (double)src[k];
		return;
	}
	for (long k = 0; k < n; k++) dst[k] = (double)src[k];
}

// The activations of the kernels below (the values of masked.go's actRelu
// and actSoftplus).
#define TM_NONE 0
#define TM_RELU 1
#define TM_SOFTPLUS 3

static inline double tm_act(double v, int act) { return act == TM_SOFTPLUS ? tm_softplus(v) : relu0(v); }

// tm_bias_act32 is the scoring kernel's activation pass of rows rows of
// width w: dst = float32(act(src + b)), src float64 (src64) or float32
// (src32, the other nil), b the same for every row, act ReLU or softplus.
CLONES void tm_bias_act32(float *dst, const double *src64, const float *src32, const double *b, long rows, long w, int act) {
	for (long i = 0; i < rows; i++) {
		float *d = dst + i * w;
		if (src64) {
			const double *s = src64 + i * w;
			if (act == TM_SOFTPLUS) {
				for (long k = 0; k < w; k++) d[k] = (float)tm_softplus(s[k] + b[k]);
			} else {
				for (long k = 0; k < w; k++) d[k] = (float)relu0(s[k] + b[k]);
			}
		} else {
			const float *s = src32 + i * w;
			if (act == TM_SOFTPLUS) {
				for (long k = 0; k < w; k++) d[k] = (float)tm_softplus((double)s[k] + b[k]);
			} else {
				for (long k = 0; k < w; k++) d[k] = (float)relu0((double)s[k] + b[k]);
			}
		}
	}
}

// tm_act64 is x = act(x + b) in place for rows rows of width w (b nil:
// x = act(x)), b the same for every row, act ReLU or softplus.
CLONES void tm_act64(double *x, const double *b, long rows, long w, int act) {
	for (long i = 0; i < rows; i++) {
		double *r = x + i * w;
		if (b) {
			if (act == TM_SOFTPLUS) {
				for (long k = 0; k < w; k++) r[k] = tm_softplus(r[k] + b[k]);
			} else {
				for (long k = 0; k < w; k++) r[k] = relu0(r[k] + b[k]);
			}
		} else {
			if (act == TM_SOFTPLUS) {
				for (long k = 0; k < w; k++) r[k] = tm_softplus(r[k]);
			} else {
				for (long k = 0; k < w; k++) r[k] = relu0(r[k]);
			}
		}
	}
}

// tm_logits32 is z = (dx + float64(y)) + b (dx may be nil: z = float64(y) +
// b) for rows rows of width w, b the same for every row.
CLONES void tm_logits32(double *z, const double *dx, const float *y, const double *b, long rows, long w) {
	for (long i = 0; i < rows; i++) {
		double *zr = z + i * w;
		const float *yr = y + i * w;
		if (dx) {
			const double *dr = dx + i * w;
			for (long k = 0; k < w; k++) zr[k] = (dr[k] + (double)yr[k]) + b[k];
		} else {
			for (long k = 0; k < w; k++) zr[k] = (double)yr[k] + b[k];
		}
	}
}

// tm_fused_act is the training graph's fused activation: res =
// act((float64(y) + hd) + b) for rows rows of width w, act ReLU or
// softplus, and its float32 copy in r32 unless r32 is nil.
CLONES void tm_fused_act(double *res, float *r32, const float *y, const double *hd, const double *b, long rows, long w, int act) {
	for (long i = 0; i < rows; i++) {
		double *r = res + i * w;
		const float *yr = y + i * w;
		const double *h = hd + i * w;
		if (act == TM_SOFTPLUS) {
			for (long k = 0; k < w; k++) r[k] = tm_softplus(((double)yr[k] + h[k]) + b[k]);
		} else if (act == TM_NONE) {
			for (long k = 0; k < w; k++) r[k] = ((double)yr[k] + h[k]) + b[k];
		} else {
			for (long k = 0; k < w; k++) r[k] = relu0(((double)yr[k] + h[k]) + b[k]);
		}
		if (r32) {
			float *q = r32 + i * w;
			for (long k = 0; k < w; k++) q[k] = (float)r[k];
		}
	}
}

// tm_softplus_grad is res = −dO·expm1(−O) = dO·σ(z) from the softplus
// output O (σ(z) = 1 − e^−softplus(z)) for n values.
CLONES void tm_softplus_grad(double *res, const double *a, const double *o, long n) {
	for (long k = 0; k < n; k++) res[k] = -a[k] * tm_expm1neg(o[k]);
}

// tm_relu_times is model.reluTimes: v where the sign bit of x is clear, v
// with its magnitude bits cleared (a zero of v's sign) where it is set.
static inline double tm_relu_times(double v, double x) {
	uint64_t vb, xb;
	memcpy(&vb, &v, 8);
	memcpy(&xb, &x, 8);
	vb &= ~((uint64_t)((int64_t)xb >> 63) >> 1);
	memcpy(&v, &vb, 8);
	return v;
}

// tm_film_fwd is model.filmFwdGo: o = p + p·s, through ReLU when relu is
// set, and its float32 copy in o32 unless o32 is nil.
CLONES void tm_film_fwd(double *o, float *o32, const double *p, const double *s, long n, int relu) {
	if (relu) {
		for (long k = 0; k < n; k++) {
			double a = p[k] + p[k] * s[k];
			o[k] = tm_relu_times(a, a);
		}
	} else {
		for (long k = 0; k < n; k++) o[k] = p[k] + p[k] * s[k];
	}
	if (o32) {
		for (long k = 0; k < n; k++) o32[k] = (float)o[k];
	}
}

// tm_film_bwd is model.filmBwdGo: with g = d (masked by the ReLU output o
// when relu is set), dp = g + g·s, ds = g·p, and dp's float32 copy in d32
// unless d32 is nil.
CLONES void tm_film_bwd(double *dp, double *ds, float *d32, const double *d, const double *s, const double *o, const double *p, long n, int relu) {
	for (long k = 0; k < n; k++) {
		double g = relu ? tm_relu_times(d[k], o[k]) : d[k];
		double v = g + g * s[k];
		dp[k] = v;
		ds[k] = g * p[k];
		if (d32) d32[k] = (float)v;
	}
}

// tm_relu_grad is res = dO where the ReLU output O is not +0, else +0, and
// its float32 copy in d32 unless d32 is nil.
CLONES void tm_relu_grad(double *res, float *d32, const double *a, const double *o, long n) {
	for (long k = 0; k < n; k++) {
		uint64_t ob;
		memcpy(&ob, &o[k], 8);
		double v = ob != 0 ? a[k] : 0.0;
		res[k] = v;
		if (d32) d32[k] = (float)v;
	}
}

// tm_colsum adds the rows rows of a [rows, w] to db[w], row after row.
CLONES void tm_colsum(double *db, const double *a, long rows, long w) {
	for (long i = 0; i < rows; i++) {
		const double *r = a + i * w;
		for (long k = 0; k < w; k++) db[k] += r[k];
	}
}

// tm_masked32 writes float32(w⊙mask) into dst for rows lo..hi−1, columns
// a0..a1−1 of row-major matrices with out columns; full[j−lo] marks rows
// whose mask is all ones there (only rounded).
CLONES void tm_masked32(float *dst, const double *w, const double *mask, const uint8_t *full, long out, long a0, long a1,
                        long lo, long hi) {
	long n = a1 - a0;
	for (long j = lo; j < hi; j++) {
		long r = j * out + a0;
		float *d = dst + r;
		const double *s = w + r, *mk = mask + r;
		if (full[j - lo]) {
			for (long k = 0; k < n; k++) d[k] = (float)s[k];
		} else {
			for (long k = 0; k < n; k++) d[k] = (float)(s[k] * mk[k]);
		}
	}
}

// tm_combine32 writes dst = (f0·float64(g0) + f1·float64(g1))⊙mask (g1 nil:
// f0·float64(g0)⊙mask) for rows j0..j1−1, columns a0..a1−1; full[j−lo]
// marks the rows whose mask is all ones there.
CLONES void tm_combine32(double *dst, const float *g0, const float *g1, double f0, double f1, const double *mask,
                         const uint8_t *full, long out, long a0, long a1, long lo, long j0, long j1) {
	long n = a1 - a0;
	for (long j = j0; j < j1; j++) {
		long r = j * out + a0;
		double *d = dst + r;
		const float *x0 = g0 + r;
		const double *mk = mask + r;
		int fl = full[j - lo];
		if (g1) {
			const float *x1 = g1 + r;
			if (fl) {
				for (long k = 0; k < n; k++) d[k] = f0 * (double)x0[k] + f1 * (double)x1[k];
			} else {
				for (long k = 0; k < n; k++) d[k] = (f0 * (double)x0[k] + f1 * (double)x1[k]) * mk[k];
			}
		} else {
			if (fl) {
				for (long k = 0; k < n; k++) d[k] = f0 * (double)x0[k];
			} else {
				for (long k = 0; k < n; k++) d[k] = (f0 * (double)x0[k]) * mk[k];
			}
		}
	}
}
