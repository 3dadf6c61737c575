/* scatterprop gof: the null distribution of the Cramer-von Mises W^2 for a
 * fully specified continuous F.
 *
 * Csorgo, S. & Faraway, J.J. (1996). The exact and asymptotic distributions
 * of Cramer-von Mises statistics. Journal of the Royal Statistical Society
 * B 58(1), 221-234.
 *
 * Limit (their eq. 1.2, the series of Anderson, T.W. & Darling, D.A.
 * (1952). Asymptotic theory of certain "goodness of fit" criteria based on
 * stochastic processes. Annals of Mathematical Statistics 23(2), 193-212):
 *   V(x) = 1/(pi^(3/2) sqrt(x)) sum_{k>=0} Gamma(k+1/2)/k! sqrt(4k+1)
 *          exp(-(4k+1)^2/(16x)) K_{1/4}((4k+1)^2/(16x)).
 * Finite n (their eq. 1.8 with psi1 of eq. 1.10): P(W_n^2 <= x) is
 *   approximately V(x) + psi1(x)/n on 1/(12n) < x < n/3, the support of W^2.
 * psi1 = V/12 + (the Bessel series in psi1_rest below).
 *
 * The series are transcribed from SciPy 1.10 (scipy/stats/_hypotests.py,
 * _cdf_cvm_inf and _psi1_mod, which in turn follow J. Faraway's code).
 * Deviation: SciPy stops each series once a term drops below 1e-7; we sum
 * until the terms are negligible in double precision, so the result is the
 * formula's value to rounding (the formula's own error, O(1/n^2), is what
 * limits the accuracy; see docs/goodness-of-fit.md). */
#include "scatterprop/gof.h"

#include <float.h>
#include <math.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_bessel.h>

static const double CVM_PI = 3.14159265358979323846;

/* Hard cap on series terms: the terms decay like exp(-k^2/(2x)), so even at
 * x = 1000 fewer than 300 are needed. */
#define CVM_MAX_TERMS 20000

/* exp(-z) K_nu(z) for z > 0, written exp(-2z) (exp(z) K_nu(z)) so that
 * nothing overflows; 0 once exp(-2z) is below DBL_MIN. */
static double emK(double nu, double z)
{
  if (2.0 * z > -log(DBL_MIN)) return 0.0;
  gsl_sf_result r;
  int st = gsl_sf_bessel_Knu_scaled_e(nu, z, &r);
  if (st != GSL_SUCCESS) return 0.0;
  return exp(-2.0 * z) * r.val;
}

/* Gamma(k + 1/2) / k! without overflow. */
static double gamma_ratio(double k)
{
  return exp(lgamma(k + 0.5) - lgamma(k + 1.0));
}

/* V(x) and 1 - V(x), summed from the same terms. */
static void cvm_inf(double x, double *V, double *Vc)
{
  double sum = 0.0;
  double c = 1.0 / (CVM_PI * sqrt(CVM_PI) * sqrt(x));
  for (int k = 0; k < CVM_MAX_TERMS; k++) {
    double y = 4.0 * k + 1.0;
    double q = y * y / (16.0 * x);
    double t = c * gamma_ratio((double)k) * sqrt(y) * emK(0.25, q);
    sum += t;
    if (t <= DBL_EPSILON * 1e-2 * sum) break;
  }
  if (sum > 1.0) sum = 1.0;
  *V = sum;
  *Vc = 1.0 - sum;
}

double sp_gof_cvm_inf_P(double x)
{
  if (isnan(x)) return NAN;
  if (x <= 0.0) return 0.0;
  if (isinf(x)) return 1.0;
  double v, vc;
  cvm_inf(x, &v, &vc);
  return v;
}

double sp_gof_cvm_inf_Q(double x)
{
  if (isnan(x)) return NAN;
  if (x <= 0.0) return 1.0;
  if (isinf(x)) return 0.0;
  double v, vc;
  cvm_inf(x, &v, &vc);
  return vc;
}

/* The pieces of psi1 in Csorgo & Faraway's eq. (1.10). */
static double ed2(double y)
{
  double z = y * y / 4.0;
  return (emK(0.25, z) + emK(0.75, z)) * pow(y / 2.0, 1.5) / sqrt(CVM_PI);
}

static double ed3(double y)
{
  double z = y * y / 4.0;
  return (2.0 * emK(0.25, z) + 3.0 * emK(0.75, z) - emK(1.25, z)) *
         pow(y / 2.0, 2.5) / sqrt(CVM_PI);
}

/* psi1(x) - V(x)/12. */
static double psi1_rest(double x)
{
  double sx = 2.0 * sqrt(x);
  double y1 = pow(x, 0.75), y2 = pow(x, 1.25);
  double tot = 0.0;
  int small = 0;
  for (int k = 0; k < CVM_MAX_TERMS; k++) {
    double kk = (double)k;
    double m = 2.0 * kk + 1.0;
    double g = gamma_ratio(kk);             /* Gamma(k+1/2)/k! */
    double g3 = (kk + 0.5) * g;             /* Gamma(k+3/2)/k! */
    double e1 = m * g * ed2((4.0 * kk + 3.0) / sx) / (9.0 * y1);
    double e2 = g * ed3((4.0 * kk + 1.0) / sx) / (72.0 * y2);
    double e3 = 2.0 * (m + 2.0) * g3 * ed3((4.0 * kk + 5.0) / sx) / (12.0 * y2);
    double e4 = 7.0 * m * g * ed2((4.0 * kk + 1.0) / sx) / (144.0 * y1);
    double e5 = 7.0 * m * g * ed2((4.0 * kk + 5.0) / sx) / (144.0 * y1);
    double t = -(e1 + e2 + e3 + e4 + e5) / CVM_PI;
    tot += t;
    /* The terms can change sign for small k; stop after two in a row are
     * negligible against the scale of the result (psi1 is O(0.1)). */
    if (fabs(t) <= DBL_EPSILON * 1e-2) {
      if (++small >= 2) break;
    } else {
      small = 0;
    }
  }
  return tot;
}

/* P_n and 1 - P_n from V, 1 - V and the 1/n correction. */
static void cvm_n(size_t n, double x, double *P, double *Q)
{
  double nn = (double)n;
  if (x <= 1.0 / (12.0 * nn)) { *P = 0.0; *Q = 1.0; return; }
  if (x >= nn / 3.0) { *P = 1.0; *Q = 0.0; return; }
  double v, vc;
  cvm_inf(x, &v, &vc);
  double corr = (v / 12.0 + psi1_rest(x)) / nn;
  double p = v + corr, q = vc - corr;
  *P = p < 0.0 ? 0.0 : (p > 1.0 ? 1.0 : p);
  *Q = q < 0.0 ? 0.0 : (q > 1.0 ? 1.0 : q);
}

double sp_gof_cvm_P(size_t n, double x)
{
  if (n == 0 || isnan(x)) return NAN;
  double p, q;
  cvm_n(n, x, &p, &q);
  return p;
}

double sp_gof_cvm_Q(size_t n, double x)
{
  if (n == 0 || isnan(x)) return NAN;
  double p, q;
  cvm_n(n, x, &p, &q);
  return q;
}
