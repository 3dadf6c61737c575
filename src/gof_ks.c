/* scatterprop gof: the null distribution of the Kolmogorov-Smirnov D_n for
 * a fully specified continuous F.
 *
 * Which method where follows Simard, R. & L'Ecuyer, P. (2011). Computing
 * the two-sided Kolmogorov-Smirnov distribution. Journal of Statistical
 * Software 39(11), 1-18, with one change: we keep the exact matrix method
 * up to n d^2 < 4 for every n whose matrix is cheap, where they switch to
 * approximations above n = 140 for speed.
 *
 * - Closed forms (Ruben, H. & Gambino, J. (1982). The exact distribution
 *   of Kolmogorov's statistic D_n for n <= 10. Annals of the Institute of
 *   Statistical Mathematics 34, 167-173; bibliographic details from
 *   memory): P(D_n < d) = n!/n^n (2nd - 1)^n for 1/(2n) <= d <= 1/n, and
 *   P(D_n >= d) = 2 (1 - d)^n for d >= 1 - 1/n.
 * - The one-sided tail P(D+_n >= d) by the exact finite sum of Smirnov and
 *   of Birnbaum, Z.W. & Tingey, F.H. (1951). One-sided confidence contours
 *   for probability distribution functions. Annals of Mathematical
 *   Statistics 22(4), 592-596 (from memory):
 *     P(D+_n >= d) = d sum_{j=0}^{floor(n(1-d))} C(n,j) (1-d-j/n)^(n-j)
 *                    (d+j/n)^(j-1).
 *   P(D_n >= d) = 2 P(D+_n >= d) - P(D+ >= d and D- >= d); the last term is
 *   0 for d > 1/2, and relative to P(D_n >= d) about exp(-6 n d^2) (from the
 *   second term of Kolmogorov's series), below 1e-10 for n d^2 >= 4 and
 *   below 2e-6 for n d^2 >= 2.2.
 * - The Durbin matrix (Durbin, J. (1968). The probability that the sample
 *   distribution function lies between two parallel straight lines. Annals
 *   of Mathematical Statistics 39, 398-411) evaluated as in Marsaglia, G.,
 *   Tsang, W.W. & Wang, J. (2003). Evaluating Kolmogorov's distribution.
 *   Journal of Statistical Software 8(18), 1-4: P(D_n < d) = n!/n^n times
 *   the (k,k) element of H^n, H of order m = 2k - 1, k = floor(n d) + 1,
 *   h = k - n d.  Deviations: the power is taken by iterative squaring
 *   with three preallocated matrices instead of the paper's recursion with
 *   an allocation per level, and the running scale is kept as an exact
 *   power of two (frexp/ldexp) instead of factors of 1e140, so scaling adds
 *   no rounding.
 * - Pelz, W. & Good, I.J. (1976). Approximating the lower tail-areas of the
 *   Kolmogorov-Smirnov one-sample statistic. Journal of the Royal
 *   Statistical Society B 38(2), 152-156: the four-term expansion in
 *   1/sqrt(n), in the arrangement used by SciPy 1.10
 *   (scipy/stats/_ksstats.py, _kolmogn_PelzGood), which we transcribed. */
#include "scatterprop/gof.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>

/* pi to double precision (M_PI is not part of C11). */
static const double KS_PI = 3.14159265358979323846;

static const char KS_CLOSED[] = "Ruben & Gambino 1982 closed form (exact)";
static const char KS_MTW[] = "Marsaglia, Tsang & Wang 2003 Durbin matrix (exact)";
static const char KS_SMIRNOV[] =
    "2 x exact one-sided tail (Birnbaum & Tingey 1951; Simard & L'Ecuyer 2011)";
static const char KS_PELZ_GOOD[] = "Pelz & Good 1976 asymptotic series";

/* Work budget of the matrix method, in multiply-adds: m^3 per product and
 * at most 2 ceil(log2 n) products.  2e8 is about 0.1 s on one core of a
 * 2 GHz machine; beyond it the approximations are accurate enough. */
#define KS_MTW_MAX_WORK 2e8

/* Thresholds on n d^2 for doubling the one-sided tail (see the comment at
 * the top for the error they imply). */
#define KS_SMIRNOV_EXACTISH 4.0
#define KS_SMIRNOV_APPROX 2.2

double sp_gof_ks_onesided_Q(size_t n, double d)
{
  if (n == 0 || isnan(d)) return NAN;
  if (d <= 0.0) return 1.0;
  if (d >= 1.0) return 0.0;
  double nn = (double)n;
  double nd = nn * d;
  double lgn = lgamma(nn + 1.0);
  double sum = 0.0;
  for (size_t j = 0; j <= n; j++) {
    double jj = (double)j;
    double a = ((nn - jj) - nd) / nn; /* 1 - d - j/n */
    if (a <= 0.0) break;
    double b = (jj + nd) / nn;        /* d + j/n */
    double lt = lgn - lgamma(jj + 1.0) - lgamma(nn - jj + 1.0) +
                (nn - jj) * log(a) + (jj - 1.0) * log(b);
    sum += exp(lt);
  }
  double q = d * sum;
  return q > 1.0 ? 1.0 : q;
}

/* C = A B for m x m row-major matrices. */
static void mat_mul(const double *A, const double *B, double *C, size_t m)
{
  for (size_t i = 0; i < m * m; i++) C[i] = 0.0;
  for (size_t i = 0; i < m; i++) {
    double *ci = C + i * m;
    for (size_t k = 0; k < m; k++) {
      double a = A[i * m + k];
      if (a == 0.0) continue;
      const double *bk = B + k * m;
      for (size_t j = 0; j < m; j++) ci[j] += a * bk[j];
    }
  }
}

/* Scales A so that its largest entry lies in [0.5, 1), adding the binary
 * exponent removed to *e.  Exact (powers of two). */
static void mat_normalise(double *A, size_t m, long *e)
{
  double mx = 0.0;
  for (size_t i = 0; i < m * m; i++)
    if (fabs(A[i]) > mx) mx = fabs(A[i]);
  if (mx == 0.0 || !isfinite(mx)) return;
  int ex;
  frexp(mx, &ex);
  if (ex == 0) return;
  for (size_t i = 0; i < m * m; i++) A[i] = ldexp(A[i], -ex);
  *e += ex;
}

static int bits_of(size_t n)
{
  int b = 0;
  while (n) { b++; n >>= 1; }
  return b;
}

/* Order of the Durbin matrix for (n, d), and whether its cost fits. */
static size_t mtw_order(double nd)
{
  size_t k = (size_t)floor(nd) + 1;
  return 2 * k - 1;
}

static int mtw_affordable(size_t n, double nd)
{
  double m = (double)mtw_order(nd);
  return m * m * m * 2.0 * bits_of(n) <= KS_MTW_MAX_WORK;
}

/* P(D_n < d) by the Durbin matrix (Marsaglia, Tsang & Wang 2003). */
static sp_status ks_mtw(size_t n, double d, double *P, sp_error *err)
{
  double nn = (double)n;
  double nd = nn * d;
  size_t k = (size_t)floor(nd) + 1;
  size_t m = 2 * k - 1;
  double h = (double)k - nd;
  double *H = malloc(3 * m * m * sizeof *H);
  if (!H)
    return sp_fail(err, SP_ENOMEM,
                   "Kolmogorov-Smirnov: cannot allocate a %zu x %zu matrix", m, m);
  double *R = H + m * m, *T = R + m * m;

  /* H[i][j] = 1 for j <= i + 1, else 0; the first column and the last row
   * lose h^(i+1) and h^(m-j); the corner regains (2h - 1)^m when 2h > 1;
   * then every entry is divided by (i - j + 1)!. */
  for (size_t i = 0; i < m; i++)
    for (size_t j = 0; j < m; j++)
      H[i * m + j] = (j <= i + 1) ? 1.0 : 0.0;
  for (size_t i = 0; i < m; i++) {
    H[i * m] -= pow(h, (double)(i + 1));
    H[(m - 1) * m + i] -= pow(h, (double)(m - i));
  }
  if (2.0 * h - 1.0 > 0.0) H[(m - 1) * m] += pow(2.0 * h - 1.0, (double)m);
  for (size_t i = 0; i < m; i++)
    for (size_t j = 0; j <= i && j < m; j++) {
      double f = 1.0;
      for (size_t g = 2; g <= i - j + 1; g++) f /= (double)g;
      H[i * m + j] *= f;
    }

  /* R = H^n by squaring, both kept normalised with binary exponents. */
  long eH = 0, eR = 0;
  int have_r = 0;
  size_t e = n;
  while (e) {
    if (e & 1u) {
      if (!have_r) {
        for (size_t i = 0; i < m * m; i++) R[i] = H[i];
        eR = eH;
        have_r = 1;
      } else {
        mat_mul(R, H, T, m);
        for (size_t i = 0; i < m * m; i++) R[i] = T[i];
        eR += eH;
        mat_normalise(R, m, &eR);
      }
    }
    e >>= 1;
    if (e) {
      mat_mul(H, H, T, m);
      for (size_t i = 0; i < m * m; i++) H[i] = T[i];
      eH *= 2;
      mat_normalise(H, m, &eH);
    }
  }
  double s = R[(k - 1) * m + (k - 1)];
  free(H);

  /* Times n!/n^n, one factor i/n at a time, rescaling by 2^256 before
   * underflow (exact, as above). */
  const int chunk = 256;
  for (size_t i = 1; i <= n && s != 0.0; i++) {
    s = s * (double)i / nn;
    if (s < 0x1p-256) {
      s = ldexp(s, chunk);
      eR -= chunk;
    }
  }
  if (eR > INT_MAX / 2) eR = INT_MAX / 2;
  if (eR < -INT_MAX / 2) eR = -INT_MAX / 2;
  s = ldexp(s, (int)eR);
  *P = s > 1.0 ? 1.0 : (s < 0.0 ? 0.0 : s);
  return SP_OK;
}

/* P(D_n < d) by Pelz & Good (1976), for 0 < d < 1. */
static double ks_pelz_good(size_t n, double d)
{
  const double pi2 = KS_PI * KS_PI, pi4 = pi2 * pi2, pi6 = pi4 * pi2;
  const double sqrt2pi = sqrt(2.0 * KS_PI);
  double nn = (double)n;
  double z = sqrt(nn) * d;
  double z2 = z * z, z3 = z2 * z, z4 = z2 * z2, z6 = z4 * z2, z8 = z4 * z4;
  double qlog = -pi2 / (8.0 * z2);
  /* Below exp(-708) q underflows: P(D_n < d) is then 0 to double
   * precision (z < 0.0417). */
  if (qlog < -708.0) return 0.0;
  double q = exp(qlog);

  double k1a = -z2, k1b = pi2 / 4.0;
  double k2a = 6.0 * z6 + 2.0 * z4;
  double k2b = (2.0 * z4 - 5.0 * z2) * pi2 / 4.0;
  double k2c = pi4 * (1.0 - 2.0 * z2) / 16.0;
  double k3d = pi6 * (5.0 - 30.0 * z2) / 64.0;
  double k3c = pi4 * (-60.0 * z2 + 212.0 * z4) / 16.0;
  double k3b = pi2 * (135.0 * z4 - 96.0 * z6) / 4.0;
  double k3a = -30.0 * z6 - 90.0 * z8;

  double K[4] = {0.0, 0.0, 0.0, 0.0};
  /* Sums over odd m = 2k - 1 of c(m) q^(m^2), by Horner's scheme in
   * q^(8k): (2k+1)^2 - (2k-1)^2 = 8k. */
  long maxk = (long)ceil(16.0 * z / KS_PI);
  for (long k = maxk; k >= 1; k--) {
    double m = (double)(2 * k - 1);
    double m2 = m * m, m4 = m2 * m2, m6 = m4 * m2;
    double qp = pow(q, 8.0 * (double)k);
    double c[4] = {1.0, k1a + k1b * m2, k2a + k2b * m2 + k2c * m4,
                   k3a + k3b * m2 + k3c * m4 + k3d * m6};
    for (int i = 0; i < 4; i++) K[i] = K[i] * qp + c[i];
  }
  double div[4] = {z, 6.0 * z4, 72.0 * z4 * z3, 6480.0 * z8 * z2};
  for (int i = 0; i < 4; i++) K[i] *= q * sqrt2pi / div[i];

  /* The sums over all integers k for K2 and K3. */
  double q2 = exp(-pi2 / (2.0 * z2));
  double s2 = 0.0, s3 = 0.0;
  for (long k = maxk; k >= 1; k--) {
    double kk = (double)k;
    double qk = pow(q2, kk * kk);
    double kpi = KS_PI * kk;
    s2 += kk * kk * qk;
    s3 += (sqrt(3.0) * z + kpi) * (sqrt(3.0) * z - kpi) * kk * kk * qk;
  }
  K[2] += s2 * pi2 * sqrt2pi / (-36.0 * z3);
  K[3] += s3 * pi2 * sqrt2pi / (216.0 * z6);

  double p = K[0] + K[1] / sqrt(nn) + K[2] / nn + K[3] / (nn * sqrt(nn));
  return p < 0.0 ? 0.0 : (p > 1.0 ? 1.0 : p);
}

sp_status sp_gof_ks_dist(size_t n, double d, double *P, double *Q,
                         const char **method, sp_error *err)
{
  if (n == 0)
    return sp_fail(err, SP_EUSAGE, "Kolmogorov-Smirnov distribution: n must be >= 1");
  if (isnan(d))
    return sp_fail(err, SP_EUSAGE, "Kolmogorov-Smirnov distribution: d is NaN");
  double nn = (double)n;
  double nd = nn * d;
  double p = NAN, q = NAN;
  const char *how = KS_CLOSED;

  if (d >= 1.0) {
    p = 1.0; q = 0.0;
  } else if (nd <= 0.5) {
    p = 0.0; q = 1.0;
  } else if (nd <= 1.0) {
    /* n!/n^n (2nd - 1)^n as a product of n factors, each < 1. */
    double t = 2.0 * nd - 1.0;
    p = 1.0;
    for (size_t i = 1; i <= n && p != 0.0; i++) p *= (double)i / nn * t;
    q = 1.0 - p;
  } else if (nd >= nn - 1.0) {
    q = 2.0 * pow(1.0 - d, nn);
    p = 1.0 - q;
  } else {
    double s = nd * d;
    if (d >= 0.5 || s >= KS_SMIRNOV_EXACTISH) {
      how = KS_SMIRNOV;
      q = 2.0 * sp_gof_ks_onesided_Q(n, d);
      p = 1.0 - q;
    } else if (mtw_affordable(n, nd)) {
      how = KS_MTW;
      sp_status st = ks_mtw(n, d, &p, err);
      if (st != SP_OK) return st;
      q = 1.0 - p;
    } else if (s >= KS_SMIRNOV_APPROX) {
      how = KS_SMIRNOV;
      q = 2.0 * sp_gof_ks_onesided_Q(n, d);
      p = 1.0 - q;
    } else {
      how = KS_PELZ_GOOD;
      p = ks_pelz_good(n, d);
      q = 1.0 - p;
    }
  }
  if (q < 0.0) q = 0.0;
  if (p < 0.0) p = 0.0;
  if (P) *P = p;
  if (Q) *Q = q;
  if (method) *method = how;
  return SP_OK;
}
