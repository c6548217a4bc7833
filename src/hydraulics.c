/* ferrocirc — steady laminar hydraulics (see include/ferrocirc/hydraulics.h for the contract).
 *
 * Series are summed to double precision: the terms whose hyperbolic functions still differ from
 * their limits (tanh -> 1, sech -> 0) are summed one by one, the rest in closed form from the
 * sums of odd powers (tail_start), so each costs at most about a dozen tanh/cosh evaluations:
 * a network of 30 000 channels loads in a blink rather than in seconds. */
#include "ferrocirc/hydraulics.h"

#include <assert.h>
#include <math.h>

#define PI 3.14159265358979323846

/* Hagen–Poiseuille law (e.g. Bruus 2008, Theoretical Microfluidics, Ch. 2). */
double fc_hyd_circle_resistance(double mu, double L, double r)
{
  assert(mu > 0 && L > 0 && r > 0);
  return 8.0 * mu * L / (PI * r * r * r * r);
}

/* tau_w = mu du/dr at the wall of the Poiseuille parabola = 4 mu Q/(pi r^3) (Bruus 2008, Ch. 2). */
double fc_hyd_circle_shear(double mu, double Q, double r)
{
  assert(mu > 0 && r > 0);
  return 4.0 * mu * Q / (PI * r * r * r);
}

/* lambda(s) = sum over odd n of n^-s = (1 - 2^-s) zeta(s) (Abramowitz & Stegun 1964, 23.2.20);
 * zeta(5) and zeta(7) to 20 digits from A&S Table 23.3, zeta(6) = pi^6/945 (A&S 23.2.16). */
#define LAMBDA5 (1.0369277551433699263 * 31.0 / 32.0)
#define LAMBDA6 (PI * PI * PI * PI * PI * PI / 960.0)
#define LAMBDA7 (1.0083492773819228268 * 127.0 / 128.0)

/* First odd n with n pi/(2 alpha) >= 20: from there on tanh(n pi/(2 alpha)) = 1 - 2e^-40... and
 * sech^2 < 4e-35, both 1 and 0 in double precision relative to the sums they enter. */
static int tail_start(double alpha)
{
  int N = (int)ceil(40.0 * alpha / PI);
  if (N % 2 == 0) N++;
  return N < 1 ? 1 : N;
}

/* sum over odd n >= N of n^-s (s = 5, 6, 7) as lambda(s) minus the first terms. */
static double odd_tail(int N, int s)
{
  double head = 0.0, lam = s == 5 ? LAMBDA5 : s == 6 ? LAMBDA6 : LAMBDA7;
  for (int n = N - 2; n >= 1; n -= 2) head += pow((double)n, -s);
  return lam - head;
}

double fc_hyd_rect_alpha(double w, double h)
{
  assert(w > 0 && h > 0);
  return w < h ? w / h : h / w;
}

/* Bruus 2008, Ch. 2: F(alpha) = 1 - (192 alpha/pi^5) sum_{n odd} tanh(n pi/(2 alpha))/n^5,
 * with tanh = 1 from tail_start on. */
double fc_hyd_rect_F(double alpha)
{
  assert(alpha > 0);
  if (alpha > 1.0) alpha = 1.0 / alpha;
  int N = tail_start(alpha);
  double s = odd_tail(N, 5);
  for (int n = N - 2; n >= 1; n -= 2) {
    double dn = n;
    s += tanh(dn * PI / (2.0 * alpha)) / (dn * dn * dn * dn * dn);
  }
  return 1.0 - 192.0 * alpha / (PI * PI * PI * PI * PI) * s;
}

/* Bruus 2008, Ch. 2: R = 12 mu L / (w h^3 F(h/w)), h <= w. */
double fc_hyd_rect_resistance(double mu, double L, double w, double h)
{
  assert(mu > 0 && L > 0 && w > 0 && h > 0);
  if (h > w) { double t = h; h = w; w = t; }
  return 12.0 * mu * L / (w * h * h * h * fc_hyd_rect_F(h / w));
}

/* R = (fF Re) 2 mu L/(Dh^2 A) solved for fF Re with Dh = 2wh/(w+h): 24/((1+alpha)^2 F)
 * (same series; Shah & London 1978 tabulate these values). */
double fc_hyd_rect_fRe(double alpha)
{
  assert(alpha > 0);
  if (alpha > 1.0) alpha = 1.0 / alpha;
  return 24.0 / ((1.0 + alpha) * (1.0 + alpha) * fc_hyd_rect_F(alpha));
}

double fc_hyd_rect_dh(double w, double h)
{
  assert(w > 0 && h > 0);
  return 2.0 * w * h / (w + h); /* Dh = 4A/P */
}

/* Plane Poiseuille flow: u = 6 U z(h - z)/h^2, tau_w = 6 mu Q/(w h^2) (Bruus 2008, Ch. 2). */
double fc_hyd_plates_shear(double mu, double Q, double w, double h)
{
  assert(mu > 0 && w > 0 && h > 0);
  if (h > w) { double t = h; h = w; w = t; }
  return 6.0 * mu * Q / (w * h * h);
}

/* Differentiating the series profile of Bruus 2008 (Ch. 2) at the centre of the wide wall gives
 * tau_c = (4 h dp/(pi^2 L)) S(alpha); dividing by 6 mu Q/(w h^2) with Q = w h^3 F dp/(12 mu L)
 * leaves 8 S/(pi^2 F). S is written as pi^2/8 - sum sech(.)/n^2 (Euler: sum_{n odd} 1/n^2 =
 * pi^2/8) because the sech sum converges geometrically while the original converges as 1/N. */
double fc_hyd_rect_centre_shear_factor(double alpha)
{
  assert(alpha > 0);
  if (alpha > 1.0) alpha = 1.0 / alpha;
  double tail = 0.0;
  for (int n = 1;; n += 2) {
    double x = n * PI / (2.0 * alpha);
    double term = 1.0 / (cosh(x) * n * n);  /* cosh overflows to inf -> term 0: fine */
    tail += term;
    if (2.0 * exp(-x) < 1e-17) break;       /* remaining terms < geometric bound */
  }
  double S = PI * PI / 8.0 - tail;
  return 8.0 * S / (PI * PI * fc_hyd_rect_F(alpha));
}

/* T(c) = sum_{m odd} 1/(m^2 (m^2 + c^2)^2) in closed form, from partial fractions
 * 1/(m^2(m^2+c^2)^2) = [1/m^2 - 1/(m^2+c^2)]/c^4 - 1/(c^2 (m^2+c^2)^2) and the classical sums
 * sum_{m odd} 1/m^2 = pi^2/8, S1 = sum 1/(m^2+c^2) = pi tanh(pi c/2)/(4c), S2 = -(1/2c) dS1/dc.
 * Used only with c >= 1, where the subtraction loses less than one digit. */
static double sum_inv_m2_mc2(double c)
{
  double x = PI * c / 2.0, th = tanh(x), ch = cosh(x);
  double sech2 = 1.0 / (ch * ch);          /* 0 when cosh overflows, as it should */
  double c2 = c * c, c4 = c2 * c2;
  double S1 = PI * th / (4.0 * c);
  double S2 = PI * th / (8.0 * c2 * c) - PI * PI * sech2 / (16.0 * c2);
  return PI * PI / (8.0 * c4) - S1 / c4 - S2 / c2;
}

/* Steady profile on [0,w]x[0,h] (w = 1, h = alpha, dp/(mu L) = 1) as a double sine series:
 * -lap u = 1 gives u = sum_{m,n odd} A_mn sin(m pi y) sin(n pi z/alpha), A_mn =
 * 16/(pi^4 m n (m^2 + c^2)), c = n/alpha. Parseval: int u^2 = (alpha/4) sum A_mn^2 =
 * (64 alpha/pi^8) sum_n T(n/alpha)/n^2; the flow is the exact Q = alpha^3 F/12 (Bruus 2008).
 * beta = A int u^2/Q^2 = 9216 sum_n T(n/alpha)/n^2 / (pi^8 alpha^4 F^2). Terms fall as n^-6
 * From tail_start on, T(c) = pi^2/(8 c^4) - 3 pi/(8 c^5) exactly in double precision (tanh = 1,
 * sech = 0 in the closed form of T), so the tail is pi^2 alpha^4/8 lambda(6) - 3 pi alpha^5/8
 * lambda(7) over odd n >= N. */
double fc_hyd_rect_beta(double alpha)
{
  assert(alpha > 0);
  if (alpha > 1.0) alpha = 1.0 / alpha;
  int N = tail_start(alpha);
  double a4 = alpha * alpha * alpha * alpha;
  double s = PI * PI * a4 / 8.0 * odd_tail(N, 6) - 3.0 * PI * a4 * alpha / 8.0 * odd_tail(N, 7);
  for (int n = N - 2; n >= 1; n -= 2) {
    double dn = n;
    s += sum_inv_m2_mc2(dn / alpha) / (dn * dn);
  }
  double F = fc_hyd_rect_F(alpha);
  double a2 = alpha * alpha, p4 = PI * PI * PI * PI;
  return 9216.0 * s / (p4 * p4 * a2 * a2 * F * F);
}

/* Lh = beta rho L / A: the kinetic energy of the steady profile per unit flow (physics
 * reference §2; beta = 1 plug flow, 4/3 Poiseuille tube). */
double fc_hyd_inertance(double beta, double rho, double L, double A)
{
  assert(beta > 0 && rho > 0 && L > 0 && A > 0);
  return beta * rho * L / A;
}

/* Lame thick-walled cylinder, open ends (Timoshenko & Goodier, Theory of Elasticity): inner
 * radial displacement u = (a p/E)[(b^2+a^2)/(b^2-a^2) + nu]; C = 2 pi a L u/p. */
double fc_hyd_tube_compliance_thick(double a, double b, double E, double nu, double L)
{
  assert(a > 0 && b > a && E > 0 && L > 0);
  double a2 = a * a, b2 = b * b;
  return 2.0 * PI * a2 * L / E * ((b2 + a2) / (b2 - a2) + nu);
}

/* Thin-walled tube, hoop stress p r/t, strain p r/(E t), dA = 2 pi r^2 p/(E t) per length. */
double fc_hyd_tube_compliance_thin(double r, double t, double E, double L)
{
  assert(r > 0 && t > 0 && E > 0 && L > 0);
  return 2.0 * PI * r * r * r * L / (E * t);
}

/* Boyle's law p V = const (isothermal ideal gas). */
double fc_hyd_gas_volume(double V0, double p0abs, double pabs)
{
  assert(V0 > 0 && p0abs > 0 && pabs > 0);
  return V0 * p0abs / pabs;
}

double fc_hyd_gas_compliance(double V0, double p0abs, double pabs)
{
  assert(V0 > 0 && p0abs > 0 && pabs > 0);
  return V0 * p0abs / (pabs * pabs);
}

double fc_hyd_gas_stored(double V0, double p0abs, double pamb, double p)
{
  assert(V0 > 0 && p0abs > 0 && pamb > 0 && pamb + p > 0);
  return V0 * p0abs * p / (pamb * (pamb + p));
}

/* Womersley 1955, J. Physiol. 127:553. */
double fc_hyd_womersley(double r, double f, double rho, double mu)
{
  assert(r > 0 && f >= 0 && rho > 0 && mu > 0);
  return r * sqrt(2.0 * PI * f * rho / mu);
}
