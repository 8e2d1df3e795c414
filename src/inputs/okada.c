/* okada.c - the surface displacement of a finite rectangular fault in an elastic half-space, Okada (1985,
 * Bull. Seismol. Soc. Am. 75, 1135-1154), evaluated at a point or fast over a grid (see okada.h).
 *
 * From the fault of okada.h to Okada's frame. okada.h gives the centre of the top edge (x_f, y_f), the
 * depth of the top edge, length L, width W, strike s (clockwise from north) and dip delta, the fault
 * dipping to the right of the strike direction. Okada's frame is right-handed with z up: x along strike,
 * y to the left of it, the lower edge at depth d below the x axis from x = 0 to x = L, the fault rising
 * towards +y (so it dips to the right of +x, as ours does). A surface point with east and north offsets
 * (e, n) from the reference point is therefore at
 *
 *     x = e sin s + n cos s + L / 2          (along strike; the top edge's centre is at x = L / 2)
 *     y = -e cos s + n sin s + W cos delta   (to the left; the top edge lies at y = W cos delta)
 *     d = depth + W sin delta                (the lower edge)
 *
 * and Okada's displacement (u_x, u_y, u_z) turns back into east = u_x sin s - u_y cos s,
 * north = u_x cos s + u_y sin s, up = u_z. The slip splits by the rake r (counter-clockwise from strike,
 * the hanging wall's motion) into U1 = slip cos r (strike-slip, positive left-lateral), U2 = slip sin r
 * (dip-slip, positive reverse: 90 is a thrust) and U3 = opening (tensile). Trigonometric functions of
 * angles in degrees are exact at multiples of 90 degrees (a rake of 90 has U1 = 0, a dip of 90 cos = 0).
 * On a geographic grid (grid.h) (e, n) are the azimuthal equidistant coordinates about the reference point
 * (true distance and true bearing from it, as source.c places its shapes): with the orthographic
 * components eo = cos(phi) sin(dlambda), no = cos(phi_f) sin(phi) - sin(phi_f) cos(phi) cos(dlambda) and
 * the angular distance c = atan2(hypot(eo, no), sin(phi_f) sin(phi) + cos(phi_f) cos(phi) cos(dlambda)),
 * (e, n) = R c (eo, no) / hypot(eo, no). sin(dlambda) and cos(dlambda) are formed from each column's and
 * the fault's sine and cosine of longitude, so a grid needs no trigonometric call per cell.
 *
 * The formulas (Okada 1985, eqs. 25-30), with sd, cd the sine and cosine of the dip and Chinnery's
 * notation f(xi, eta)|| = f(x, p) - f(x, p - W) - f(x - L, p) + f(x - L, p - W) for each bracket:
 * p = y cd + d sd, q = y sd - d cd, ytil = eta cd + q sd, dtil = eta sd - q cd, R^2 = xi^2 + eta^2 + q^2,
 * X^2 = xi^2 + q^2, m = mu / (lambda + mu) = 1 - 2 nu, A = atan(xi eta / (q R)):
 *
 *   strike-slip  u_x = -U1/2pi [xi q / (R (R+eta)) + A + I1 sd]
 *                u_y = -U1/2pi [ytil q / (R (R+eta)) + q cd / (R+eta) + I2 sd]
 *                u_z = -U1/2pi [dtil q / (R (R+eta)) + q sd / (R+eta) + I4 sd]
 *   dip-slip     u_x = -U2/2pi [q / R - I3 sd cd]
 *                u_y = -U2/2pi [ytil q / (R (R+xi)) + cd A - I1 sd cd]
 *                u_z = -U2/2pi [dtil q / (R (R+xi)) + sd A - I5 sd cd]
 *   tensile      u_x = U3/2pi [q^2 / (R (R+eta)) - I3 sd^2]
 *                u_y = U3/2pi [-dtil q / (R (R+xi)) - sd (xi q / (R (R+eta)) - A) - I1 sd^2]
 *                u_z = U3/2pi [ytil q / (R (R+xi)) + cd (xi q / (R (R+eta)) - A) - I5 sd^2]
 *
 *   cd != 0:  I1 = -m xi / (cd (R+dtil)) - (sd/cd) I5          I2 = -m ln(R+eta) - I3
 *             I3 = m [ytil / (cd (R+dtil)) - ln(R+eta)] + (sd/cd) I4
 *             I4 = (m/cd) [ln(R+dtil) - sd ln(R+eta)]
 *             I5 = (2m/cd) atan[(eta (X + q cd) + X (R+X) sd) / (xi (R+X) cd)]        (0 when xi = 0)
 *   cd = 0:   I1 = -(m/2) xi q / (R+dtil)^2       I3 = (m/2) [eta / (R+dtil) + ytil q / (R+dtil)^2 - ln(R+eta)]
 *             I4 = -m q / (R+dtil)                 I5 = -m xi sd / (R+dtil)
 *
 * Singular cases (Okada 1985 and its rules as restated in Okada 1992, BSSA 82): q = 0 sets
 * atan(xi eta / (q R)) to 0 (the mean of its two sides, and the limit off the fault); xi = 0 sets I5 to 0;
 * R + eta = 0 sets the terms with R + eta in a denominator to 0 and ln(R + eta) to -ln(R - eta); R + xi = 0
 * likewise sets the terms divided by it to 0. R = 0 (a point exactly at a corner of a fault that reaches
 * the surface, where the displacement is singular) lets that corner contribute nothing: the value there
 * is finite but arbitrary. A dip whose cosine is below OK_VERTICAL_COS (above 89.99966 degrees) is taken
 * as 90 and uses the cos d = 0 forms: the general forms of I1 and I3 cancel terms of order 1 / cos d and
 * lose eps / cos^2 d of the horizontal motion, the limits are off by order cos d; on either side of the
 * switch the error stays below 1.2e-5 of the peak (measured against the formulas in 50-digit arithmetic).
 *
 * What is computed, and how it stays exact and fast. The quantities ytil and dtil of the four corners are
 * y, y - W cos d and d, depth (their closed forms). R + eta for eta < 0 is taken as X^2 / (R - eta) and
 * R + xi for xi < 0 as (eta^2 + q^2) / (R - xi), the same numbers without the cancellation. The
 * logarithms enter only as Chinnery sums with corner-independent factors, so each sum is one logarithm of
 * a quotient of products: sum(+-ln a) = ln((a1 a4) / (a2 a3)). The arctangents likewise: every
 * atan(b / a) of a corner is the argument of the complex number |a| + i sgn(a) b in the right half-plane
 * (q and R + X are shared or positive), the difference of two such arguments is the argument of one times
 * the conjugate of the other (it lies in (-pi, pi)), and the sum of the two differences is the argument of
 * their product plus the multiple of 2 pi that the quadrants of the two differences fix. So a point needs
 * two logarithms and two arctangents (a vertical fault's vertical motion: one arctangent), evaluated
 * by ok_log and ok_atan2 below: straight-line series (within 2 units in the last place of the C library's)
 * that the compiler vectorises with the rest of a row, so a grid row of one fault runs without a call or a
 * branch. The vertical motion is computed the same way whether or not the horizontal one is asked for:
 * its bits do not depend on it.
 *
 * The grid (sw_okada_field): threads share the rows (static schedule, four at a time); each row sums its
 * faults in index order, so every cell's value is the same for any thread count and equal, bit for bit, to
 * sw_okada_point at its centre. A fault is evaluated only in its window: the cells within a distance D of
 * its reference point, D = cutoff (L + W + depth) + sqrt((L/2)^2 + (W cd)^2) (the farthest point of the
 * fault's surface projection from the reference point), so the window holds every point within
 * cutoff (L + W + depth) of the projection. On a projected grid a row's window is the chord of that disc;
 * on a geographic grid the chord of the spherical cap (haversine: hav(dlambda) <= (hav(D/R) - hav(dphi)) /
 * (cos phi_f cos phi)), on both sides of the longitude seam. Rows beyond the window cost one comparison.
 */
#include "inputs/okada.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "base/omp_compat.h"

#define OK_PI 3.14159265358979323846
#define OK_PI_2 1.57079632679489661923
#define OK_PI_4 0.78539816339744830962
#define OK_2PI 6.28318530717958647693
#define OK_SQRT2 1.41421356237309504880
#define OK_TAN_PI_8 0.41421356237309504880   /* sqrt(2) - 1 */
#define OK_ATAN_C8 0.39269908169872414256    /* atan of OK_TAN_PI_8 as a double (not pi/8) */
#define OK_TAN_PI_16 0.19891236737965800691
#define OK_TAN_3PI_16 0.66817863791929891999
/* ln 2 split so that k * OK_LN2_HI is exact for |k| < 2^21 (OK_LN2_HI has 32 significant bits) and
 * OK_LN2_HI + OK_LN2_LO = ln 2 to double precision [derived with 50-digit arithmetic] */
#define OK_LN2_HI 0.693147180369123816490
#define OK_LN2_LO 1.90821492927058770002e-10
/* cos(dip) below which the fault is taken as vertical (see the top of this file) */
#define OK_VERTICAL_COS 6e-6
/* the per-cell helpers are inlined into each specialised row loop, so that it vectorises whole */
#define OK_INLINE inline __attribute__((always_inline))
/* cells evaluated together in a row: the loop's working set stays in L1 */
#define OK_CHUNK 256

/* A fault prepared for evaluation: everything per fault, hoisted out of the cell loops. */
typedef struct {
    double x_m, y_m;          /* reference point (grid coordinates, m) */
    double ss, cs, ncs;       /* sin, cos and -cos of the strike */
    double L, W;              /* length and width, m */
    double d;                 /* depth of the lower edge, m (Okada's d) */
    double depth;             /* depth of the top edge, m (dtil of the corners eta = p - W) */
    double sd, cd;            /* sin and cos of the dip (1 and 0 when vertical) */
    double tand, sdcd, sd2;   /* tan, sin cos and sin^2 of the dip */
    double wcd;               /* W cos(dip), m: Okada y of the top edge */
    int vertical;             /* 1: the cos(dip) = 0 forms */
    double m;                 /* mu / (lambda + mu) = 1 - 2 nu */
    double c1, c2, c3;        /* -U1 / 2pi, -U2 / 2pi, U3 / 2pi (m) */
    double radius;            /* geographic: the sphere's radius, m; 0 on a projected plane */
    double slam, clam, nslam; /* geographic: sin, cos and -sin of the reference point's longitude */
    double sphi, cphi;        /* geographic: sin and cos of its latitude */
    double lam, phi;          /* geographic: its longitude and latitude, rad */
    double window_m;          /* the window's radius D, m (INFINITY: everywhere) */
} ok_fault;

/* sin and cos of an angle in degrees, exact at multiples of 90 degrees. */
static void ok_sincos_deg(double deg, double *s, double *c)
{
    double r = fmod(deg, 360.0);
    if (r > 180.0)
        r -= 360.0;
    else if (r < -180.0)
        r += 360.0;
    if (r == 0.0) {
        *s = 0.0;
        *c = 1.0;
    } else if (r == 90.0) {
        *s = 1.0;
        *c = 0.0;
    } else if (r == -90.0) {
        *s = -1.0;
        *c = 0.0;
    } else if (r == 180.0 || r == -180.0) {
        *s = 0.0;
        *c = -1.0;
    } else {
        const double a = r * (OK_PI / 180.0);
        *s = sin(a);
        *c = cos(a);
    }
}

/* ln x for a positive, finite, normal x (within 2 units in the last place of the C library's log over 2e7
 * random arguments, measured): x = 2^k m with m in [sqrt(1/2), sqrt(2)),
 * ln m = 2 atanh(s) = 2 s (1 + s^2/3 + s^4/5 + ...), s = (m - 1) / (m + 1), |s| < 0.1716; the series to
 * s^20 leaves less than 1e-18 [derived]. Branch-free, so that it vectorises. */
static OK_INLINE double ok_log(double x)
{
    uint64_t b;
    memcpy(&b, &x, sizeof b);
    /* the biased exponent as a double: 2^52 + e, minus 2^52 */
    const uint64_t eb = (b >> 52) | UINT64_C(0x4330000000000000);
    double k;
    memcpy(&k, &eb, sizeof k);
    k = k - 4503599627370496.0 - 1023.0;
    const uint64_t mb = (b & UINT64_C(0x000FFFFFFFFFFFFF)) | UINT64_C(0x3FF0000000000000);
    double m;
    memcpy(&m, &mb, sizeof m);                 /* [1, 2) */
    const int big = m > OK_SQRT2;
    m = big ? 0.5 * m : m;
    k = big ? k + 1.0 : k;
    const double f = m - 1.0;                  /* exact (Sterbenz) */
    const double s = f / (2.0 + f);
    const double z = s * s;
    /* z (1/3 + z/5 + ... + z^9/21), Estrin's scheme (a short dependency chain) */
    const double z2 = z * z, z4 = z2 * z2, z8 = z4 * z4;
    const double p01 = 1.0 / 3 + z * (1.0 / 5), p23 = 1.0 / 7 + z * (1.0 / 9), p45 = 1.0 / 11 + z * (1.0 / 13);
    const double p67 = 1.0 / 15 + z * (1.0 / 17), p89 = 1.0 / 19 + z * (1.0 / 21);
    const double p = z * ((p01 + z2 * p23) + z4 * (p45 + z2 * p67) + z8 * p89);
    const double lm = 2.0 * s + 2.0 * s * p;
    return k * OK_LN2_HI + (lm + k * OK_LN2_LO);
}

/* atan2(y, x) (within 2 units in the last place of the C library's, measured; 0 for x = y = 0).
 * t = min / max of |x|, |y| lies in [0, 1]; atan t = atan c + atan((t - c) / (1 + c t)) with c = 0, c8
 * (tan(pi/8) rounded to double; atan(c8) is OK_ATAN_C8, from 40-digit arithmetic [derived]) or 1 brings
 * the argument within tan(pi/16) = 0.199 of 0, where the series u - u^3/3 + ... to u^23 leaves less than
 * 1e-18 [derived]. One division, branch-free, so that it vectorises. */
static OK_INLINE double ok_atan2(double y, double x)
{
    const double ax = fabs(x), ay = fabs(y);
    const double hi = ax > ay ? ax : ay, lo = ax > ay ? ay : ax;
    const int k1 = lo > OK_TAN_PI_16 * hi, k2 = lo > OK_TAN_3PI_16 * hi;
    const double c = k2 ? 1.0 : (k1 ? OK_TAN_PI_8 : 0.0);
    const double base = k2 ? OK_PI_4 : (k1 ? OK_ATAN_C8 : 0.0);
    const double num = lo - c * hi, den = hi + c * lo;
    const double u = den > 0.0 ? num / den : 0.0;
    const double z = u * u;
    /* z (-1/3 + z/5 - ... - z^10/23), Estrin's scheme (a short dependency chain) */
    const double z2 = z * z, z4 = z2 * z2, z8 = z4 * z4;
    const double p01 = -1.0 / 3 + z * (1.0 / 5), p23 = -1.0 / 7 + z * (1.0 / 9), p45 = -1.0 / 11 + z * (1.0 / 13);
    const double p67 = -1.0 / 15 + z * (1.0 / 17), p89 = -1.0 / 19 + z * (1.0 / 21), p10 = -1.0 / 23;
    const double p = z * ((p01 + z2 * p23) + z4 * (p45 + z2 * p67) + z8 * (p89 + z2 * p10));
    double r = base + (u + u * p);
    r = ay > ax ? OK_PI_2 - r : r;
    r = x < 0.0 ? OK_PI - r : r;
    return y < 0.0 ? -r : r;
}

/* The lower end of the quarter-turn holding the argument of (re, im): 0, pi/2, -pi, -pi/2. */
static OK_INLINE double ok_quarter(double re, double im)
{
    return im >= 0.0 ? (re >= 0.0 ? 0.0 : OK_PI_2) : (re >= 0.0 ? -OK_PI_2 : -OK_PI);
}

/* arg(w1) + arg(w2), each in (-pi, pi), without wrapping: the argument of w1 w2 moved by the multiple of
 * 2 pi that puts it within pi/2 of the middle of the half-turn the two quarters allow. */
static OK_INLINE double ok_argsum(double r1, double i1, double r2, double i2)
{
    const double mid = ok_quarter(r1, i1) + ok_quarter(r2, i2) + OK_PI_2;
    const double a = ok_atan2(r1 * i2 + i1 * r2, r1 * r2 - i1 * i2);
    const double t = mid - a;
    return a + (t > OK_PI ? OK_2PI : (t < -OK_PI ? -OK_2PI : 0.0));
}

/* What one corner (xi, eta) gives the Chinnery sums. */
typedef struct {
    double iR, iRe, iRRe, iRRx, iRd;   /* 1/R, 1/(R+eta), 1/(R (R+eta)), 1/(R (R+xi)), 1/(R+dtil); 0 where the
                                        * rules say so (iR, iRd only when needd) */
    double le_n, le_d;                 /* R+eta as le_n / le_d (for the logarithm; 1/(R-eta) when R+eta = 0) */
    double ld;                         /* R+dtil for the logarithm (1 when R = 0) */
    double ar, ai;                     /* atan(xi eta / (q R)) as the argument of ar + i ai, ar >= 0 */
    double fr, fi;                     /* I5's arctangent as the argument of fr + i fi, fr >= 0 (general dips) */
} ok_corner;

/* The corner (xi, eta) with dtil and the shared q, X = sqrt(xi^2 + q^2). needd: also 1/R and 1/(R+dtil).
 * One division serves 1/(R (R+eta)), 1/(R+eta), 1/(R (R+xi)) and 1/R: 1/(R (R+eta) (R+xi)) times the other
 * factors; 1/(R+dtil) has its own, so that the vertical displacement's bits do not depend on needd. */
static OK_INLINE ok_corner ok_corner_at(const ok_fault *f, double xi, double eta, double dtil, double q, double X,
                                        const int vert, const int needd)
{
    ok_corner c;
    const double xi2 = xi * xi, eta2 = eta * eta, q2 = q * q;
    const double R = sqrt(xi2 + eta2 + q2);
    /* R + eta = ed / en: X^2 / (R - eta) for eta < 0; R + xi = xd / xn likewise */
    const double en = eta >= 0.0 ? 1.0 : R - eta, ed = eta >= 0.0 ? R + eta : xi2 + q2;
    const double xn = xi >= 0.0 ? 1.0 : R - xi, xd = xi >= 0.0 ? R + xi : eta2 + q2;
    const double Rd = R + dtil;
    const int okR = R > 0.0, oke = ed > 0.0, okx = xd > 0.0, okd = Rd > 0.0;
    const double Rs = okR ? R : 1.0, es = oke ? ed : 1.0, xs = okx ? xd : 1.0;
    const double inv = 1.0 / (Rs * es * xs);
    c.iRe = oke ? en * (Rs * xs) * inv : 0.0;
    c.iRRe = (oke && okR) ? en * xs * inv : 0.0;
    c.iRRx = (okx && okR) ? xn * es * inv : 0.0;
    c.iR = (needd && okR) ? (es * xs) * inv : 0.0;
    c.iRd = (needd && okd) ? 1.0 / Rd : 0.0;
    c.le_n = oke ? ed : 1.0;                      /* ln(R+eta) = ln(ed / en); -ln(R-eta) when ed = 0 */
    c.le_d = okR ? en : 1.0;
    c.ld = okd ? Rd : 1.0;
    c.ar = fabs(q) * R;
    c.ai = q < 0.0 ? -(xi * eta) : xi * eta;
    if (!vert) {
        const double RX = R + X;
        const double n5 = eta * (X + q * f->cd) + X * RX * f->sd;
        c.fr = xi != 0.0 ? fabs(xi) * RX * f->cd : 1.0;
        c.fi = xi > 0.0 ? n5 : (xi < 0.0 ? -n5 : 0.0);
    } else {
        c.fr = 1.0;
        c.fi = 0.0;
    }
    return c;
}

/* Okada's displacement (x, y, z in his frame) at his surface point (x, y), for fault f. horiz: also the
 * horizontal parts (else x and y are 0); vert: the cos(dip) = 0 forms. */
typedef struct {
    double x, y, z;
} ok_vec;

static OK_INLINE ok_vec ok_disp(const ok_fault *f, double x, double y, const int horiz, const int vert)
{
    const double sd = f->sd, cd = f->cd, m = f->m;
    const double p = y * cd + f->d * sd, q = y * sd - f->d * cd;
    const double x2 = x - f->L, p2 = p - f->W, y2 = y - f->wcd;
    const double X1 = sqrt(x * x + q * q), X2 = vert ? 0.0 : sqrt(x2 * x2 + q * q);
    /* corners: a (x, p) +, b (x, p - W) -, c (x - L, p) -, e (x - L, p - W) + */
    const int needd = horiz || vert;
    const ok_corner a = ok_corner_at(f, x, p, f->d, q, X1, vert, needd);
    const ok_corner b = ok_corner_at(f, x, p2, f->depth, q, X1, vert, needd);
    const ok_corner c = ok_corner_at(f, x2, p, f->d, q, X2, vert, needd);
    const ok_corner e = ok_corner_at(f, x2, p2, f->depth, q, X2, vert, needd);

    /* Chinnery sums of the rational terms (q factored out where every term carries it) */
    const double S_xiRe = x * a.iRRe - x * b.iRRe - x2 * c.iRRe + x2 * e.iRRe;
    const double S_dtRe = f->d * a.iRRe - f->depth * b.iRRe - f->d * c.iRRe + f->depth * e.iRRe;
    const double S_Re = a.iRe - b.iRe - c.iRe + e.iRe;
    const double S_ytRx = y * a.iRRx - y2 * b.iRRx - y * c.iRRx + y2 * e.iRRx;
    const double S_dtRx = f->d * a.iRRx - f->depth * b.iRRx - f->d * c.iRRx + f->depth * e.iRRx;
    const double T1 = q * S_xiRe, T3 = q * S_dtRe, T4 = q * S_Re, T7 = q * S_ytRx, T8 = q * S_dtRx;

    /* the arctangent atan(xi eta / (q R)) summed (0 when q = 0) */
    const double as = ok_argsum(a.ar * b.ar + a.ai * b.ai, a.ai * b.ar - a.ar * b.ai, e.ar * c.ar + e.ai * c.ai,
                                e.ai * c.ar - e.ar * c.ai);
    const double AS = q != 0.0 ? as : 0.0;
    /* ln(R + eta) summed: ln of (ed/en)_a (ed/en)_e / ((ed/en)_b (ed/en)_c) */
    const double LRe =
        (horiz || !vert) ? ok_log((a.le_n * e.le_n * b.le_d * c.le_d) / (a.le_d * e.le_d * b.le_n * c.le_n)) : 0.0;

    double I1 = 0.0, I2 = 0.0, I3 = 0.0, I4, I5;
    if (!vert) {
        const double LRd = ok_log((a.ld * e.ld) / (b.ld * c.ld));
        const double A5 = ok_argsum(a.fr * b.fr + a.fi * b.fi, a.fi * b.fr - a.fr * b.fi,
                                    e.fr * c.fr + e.fi * c.fi, e.fi * c.fr - e.fr * c.fi);
        I4 = m / cd * (LRd - sd * LRe);
        I5 = 2.0 * m / cd * A5;
        if (horiz) {
            const double S_xiRd = x * a.iRd - x * b.iRd - x2 * c.iRd + x2 * e.iRd;
            const double S_ytRd = y * a.iRd - y2 * b.iRd - y * c.iRd + y2 * e.iRd;
            I3 = m * (S_ytRd / cd - LRe) + f->tand * I4;
            I2 = -m * LRe - I3;
            I1 = -m * S_xiRd / cd - f->tand * I5;
        }
    } else {
        /* dtil = eta, ytil = q: I4 = -m q / (R+dtil), I5 = -m xi / (R+dtil) (sin d = 1) */
        I4 = -m * q * (a.iRd - b.iRd - c.iRd + e.iRd);
        I5 = -m * (x * a.iRd - x * b.iRd - x2 * c.iRd + x2 * e.iRd);
        if (horiz) {
            const double a2 = a.iRd * a.iRd, b2 = b.iRd * b.iRd, c2 = c.iRd * c.iRd, e2 = e.iRd * e.iRd;
            I1 = -0.5 * m * q * (x * a2 - x * b2 - x2 * c2 + x2 * e2);
            I3 = 0.5 * m * ((p * a.iRd - p2 * b.iRd - p * c.iRd + p2 * e.iRd) + q * q * (a2 - b2 - c2 + e2) - LRe);
            I2 = -m * LRe - I3;
        }
    }

    ok_vec u;
    u.z = f->c1 * (T3 + sd * T4 + sd * I4) + f->c2 * (T8 + sd * AS - f->sdcd * I5)
        + f->c3 * (T7 + cd * (T1 - AS) - f->sd2 * I5);
    if (horiz) {
        const double S_ytRe = y * a.iRRe - y2 * b.iRRe - y * c.iRRe + y2 * e.iRRe;
        const double S_R = a.iR - b.iR - c.iR + e.iR;
        const double S_qRe = a.iRRe - b.iRRe - c.iRRe + e.iRRe;
        const double T2 = q * S_ytRe, T5 = q * q * S_qRe, T6 = q * S_R;
        u.x = f->c1 * (T1 + AS + sd * I1) + f->c2 * (T6 - f->sdcd * I3) + f->c3 * (T5 - f->sd2 * I3);
        u.y = f->c1 * (T2 + cd * T4 + sd * I2) + f->c2 * (T7 + cd * AS - f->sdcd * I1)
            + f->c3 * (-T8 - sd * (T1 - AS) - f->sd2 * I1);
    } else {
        u.x = 0.0;
        u.y = 0.0;
    }
    return u;
}

/* Prepares fault f for evaluation on grid g (NULL or projected: the plane). f must be valid
 * (ok_check); cutoff as in sw_okada_field. */
static void ok_prepare(const sw_okada_fault *f, const sw_grid *g, double cutoff, ok_fault *o)
{
    memset(o, 0, sizeof *o);
    o->x_m = f->x_m;
    o->y_m = f->y_m;
    ok_sincos_deg(f->strike_deg, &o->ss, &o->cs);
    o->ncs = -o->cs;
    ok_sincos_deg(f->dip_deg, &o->sd, &o->cd);
    o->vertical = o->cd < OK_VERTICAL_COS;
    if (o->vertical) {
        o->sd = 1.0;
        o->cd = 0.0;
    }
    o->tand = o->vertical ? 0.0 : o->sd / o->cd;
    o->sdcd = o->sd * o->cd;
    o->sd2 = o->sd * o->sd;
    o->L = f->length_m;
    o->W = f->width_m;
    o->depth = f->depth_m;
    o->d = f->depth_m + f->width_m * o->sd;
    o->wcd = f->width_m * o->cd;
    o->m = 1.0 - 2.0 * f->poisson;
    double sr, cr;
    ok_sincos_deg(f->rake_deg, &sr, &cr);
    o->c1 = -f->slip_m * cr / OK_2PI;
    o->c2 = -f->slip_m * sr / OK_2PI;
    o->c3 = f->opening_m / OK_2PI;
    if (g && sw_grid_geographic(g)) {
        o->radius = g->radius_m;
        o->lam = f->x_m / g->radius_m;
        o->phi = f->y_m / g->radius_m;
        o->slam = sin(o->lam);
        o->nslam = -o->slam;
        o->clam = cos(o->lam);
        o->sphi = sin(o->phi);
        o->cphi = cos(o->phi);
    }
    const double far = sqrt(0.25 * o->L * o->L + o->wcd * o->wcd);
    o->window_m = cutoff > 0.0 ? cutoff * (f->length_m + f->width_m + f->depth_m) + far : INFINITY;
}

/* The azimuthal equidistant east and north offsets (m) from f's reference point of the point with the
 * given sines and cosines of longitude and latitude (see the top of this file). */
static OK_INLINE void ok_local_geo(const ok_fault *f, double slam, double clam, double sphi, double cphi, double *e,
                                double *n)
{
    const double sdl = slam * f->clam + clam * f->nslam;   /* a sum, as in ok_at */
    const double cdl = clam * f->clam + slam * f->slam;
    const double eo = cphi * sdl;
    const double no = f->cphi * sphi - f->sphi * cphi * cdl;
    const double cc = f->sphi * sphi + f->cphi * cphi * cdl;
    const double sc = sqrt(eo * eo + no * no);
    const double k = sc > 0.0 ? f->radius * ok_atan2(sc, cc) / sc : f->radius;
    *e = k * eo;
    *n = k * no;
}

/* The east, north and up displacement at east/north offsets (e, n) from f's reference point. */
static OK_INLINE ok_vec ok_at(const ok_fault *f, double e, double n, const int horiz, const int vert)
{
    const double x = e * f->ss + n * f->cs + 0.5 * f->L;
    const double y = e * f->ncs + n * f->ss + f->wcd;
    const ok_vec u = ok_disp(f, x, y, horiz, vert);
    ok_vec r;
    /* east = u_x sin s - u_y cos s, written as a sum (and y above): GCC 12 fuses a subtraction beside an
     * addition into one vfmaddsub despite -ffp-contract=off, which would make sw_okada_point differ from
     * the grid (test_okada.c checks that they agree) */
    r.x = u.x * f->ss + u.y * f->ncs;
    r.y = u.x * f->cs + u.y * f->ss;
    r.z = u.z;
    return r;
}

/* Checks fault f (index k for the message). Returns SW_OK or SW_ERR_RANGE naming the key and the
 * accepted range. */
static sw_status ok_check(const sw_okada_fault *f, size_t k, sw_error *err)
{
    const struct {
        const char *key;
        double v;
    } all[] = {{"x", f->x_m},          {"y", f->y_m},         {"depth", f->depth_m},   {"length", f->length_m},
               {"width", f->width_m},  {"strike", f->strike_deg}, {"dip", f->dip_deg}, {"rake", f->rake_deg},
               {"slip", f->slip_m},    {"opening", f->opening_m}, {"poisson", f->poisson}};
    for (size_t i = 0; i < sizeof all / sizeof all[0]; i++)
        if (!isfinite(all[i].v))
            return sw_fail(err, SW_ERR_RANGE, "fault %zu: %s = %g is not a finite number", k, all[i].key, all[i].v);
    if (!(f->dip_deg > 0.0 && f->dip_deg <= 90.0))
        return sw_fail(err, SW_ERR_RANGE, "fault %zu: dip = %g deg is out of range (accepted: 0 < dip <= 90)", k,
                       f->dip_deg);
    if (!(f->length_m > 0.0))
        return sw_fail(err, SW_ERR_RANGE, "fault %zu: length = %g m is out of range (accepted: > 0)", k, f->length_m);
    if (!(f->width_m > 0.0))
        return sw_fail(err, SW_ERR_RANGE, "fault %zu: width = %g m is out of range (accepted: > 0)", k, f->width_m);
    if (!(f->depth_m >= 0.0))
        return sw_fail(err, SW_ERR_RANGE,
                       "fault %zu: depth = %g m is out of range (accepted: >= 0, the top edge's depth below the sea "
                       "floor)", k, f->depth_m);
    if (!(f->slip_m >= 0.0))
        return sw_fail(err, SW_ERR_RANGE,
                       "fault %zu: slip = %g m is out of range (accepted: >= 0; turn the rake by 180 deg instead)", k,
                       f->slip_m);
    if (!(f->poisson > 0.0 && f->poisson < 0.5))
        return sw_fail(err, SW_ERR_RANGE, "fault %zu: poisson = %g is out of range (accepted: 0 < poisson < 0.5)", k,
                       f->poisson);
    return SW_OK;
}

void sw_okada_point(const sw_okada_fault *f, const sw_grid *g, double x_m, double y_m, double out[3])
{
    ok_fault o;
    ok_prepare(f, g, 0.0, &o);
    double e, n;
    if (o.radius > 0.0) {
        const double lam = x_m / o.radius, phi = y_m / o.radius;
        ok_local_geo(&o, sin(lam), cos(lam), sin(phi), cos(phi), &e, &n);
    } else {
        e = x_m - o.x_m;
        n = y_m - o.y_m;
    }
    const ok_vec u = o.vertical ? ok_at(&o, e, n, 1, 1) : ok_at(&o, e, n, 1, 0);
    out[0] = u.x;
    out[1] = u.y;
    out[2] = u.z;
}

/* What a row of cells needs besides the fault. */
typedef struct {
    const sw_grid *g;
    const double *slam, *clam;   /* geographic: sin and cos of each column's longitude; NULL on a plane */
    double yc;                   /* the row's y, m */
    double sphi, cphi;           /* geographic: sin and cos of the row's latitude */
} ok_row;

/* Cells i0 .. i0+nc-1 of row r for fault f into bx, by, bz (east, north, up; by and bx untouched unless
 * horiz). */
static OK_INLINE void ok_cells(const ok_fault *restrict f, const ok_row *restrict r, size_t i0, size_t nc,
                            double *restrict bx, double *restrict by, double *restrict bz, const int horiz,
                            const int vert, const int geo)
{
    const double x0 = r->g->x0_m, dx = r->g->dx_m, yc = r->yc, sphi = r->sphi, cphi = r->cphi;
    const double *restrict slam = r->slam, *restrict clam = r->clam;
    SW_OMP(simd)
    for (size_t c = 0; c < nc; c++) {
        double e, n;
        if (geo) {
            ok_local_geo(f, slam[i0 + c], clam[i0 + c], sphi, cphi, &e, &n);
        } else {
            e = (x0 + ((double)(i0 + c) + 0.5) * dx) - f->x_m;
            n = yc - f->y_m;
        }
        const ok_vec u = ok_at(f, e, n, horiz, vert);
        if (horiz) {
            bx[c] = u.x;
            by[c] = u.y;
        }
        bz[c] = u.z;
    }
}

/* The eight specialised loops (horizontal parts wanted, vertical fault, geographic grid). */
typedef void (*ok_cells_fn)(const ok_fault *, const ok_row *, size_t, size_t, double *, double *, double *);
#define OK_CELLS(H, V, G)                                                                                      \
    static void ok_cells_##H##V##G(const ok_fault *f, const ok_row *r, size_t i0, size_t nc, double *bx,        \
                                   double *by, double *bz)                                                      \
    {                                                                                                           \
        ok_cells(f, r, i0, nc, bx, by, bz, H, V, G);                                                            \
    }
OK_CELLS(0, 0, 0)
OK_CELLS(0, 0, 1)
OK_CELLS(0, 1, 0)
OK_CELLS(0, 1, 1)
OK_CELLS(1, 0, 0)
OK_CELLS(1, 0, 1)
OK_CELLS(1, 1, 0)
OK_CELLS(1, 1, 1)
static const ok_cells_fn OK_CELLS_FN[2][2][2] = {
    {{ok_cells_000, ok_cells_001}, {ok_cells_010, ok_cells_011}},
    {{ok_cells_100, ok_cells_101}, {ok_cells_110, ok_cells_111}},
};

/* Adds fault f's displacement on columns i0 .. i1-1 of row j (outputs at their row starts; NULL: not
 * wanted). */
static void ok_add_span(const ok_fault *f, const ok_row *r, int horiz, size_t i0, size_t i1, double *ux, double *uy,
                        double *uz)
{
    double bx[OK_CHUNK], by[OK_CHUNK], bz[OK_CHUNK];
    const ok_cells_fn fn = OK_CELLS_FN[horiz][f->vertical][r->slam != NULL];
    for (size_t c0 = i0; c0 < i1; c0 += OK_CHUNK) {
        const size_t nc = i1 - c0 < OK_CHUNK ? i1 - c0 : OK_CHUNK;
        fn(f, r, c0, nc, bx, by, bz);
        if (ux)
            for (size_t c = 0; c < nc; c++)
                ux[c0 + c] += bx[c];
        if (uy)
            for (size_t c = 0; c < nc; c++)
                uy[c0 + c] += by[c];
        if (uz)
            for (size_t c = 0; c < nc; c++)
                uz[c0 + c] += bz[c];
    }
}

/* Columns [*i0, *i1) of a grid of nx columns whose x lies in [xa, xb] (empty when none). */
static void ok_columns(const sw_grid *g, double xa, double xb, size_t *i0, size_t *i1)
{
    const double nx = (double)g->nx;
    double a = ceil((xa - g->x0_m) / g->dx_m - 0.5), b = floor((xb - g->x0_m) / g->dx_m - 0.5) + 1.0;
    a = a < 0.0 ? 0.0 : (a > nx ? nx : a);
    b = b < 0.0 ? 0.0 : (b > nx ? nx : b);
    *i0 = (size_t)a;
    *i1 = b > a ? (size_t)b : (size_t)a;
}

/* Adds fault f's displacement over its window on row r (j: the row's index). */
static void ok_add_row(const ok_fault *f, const ok_row *r, size_t j, int horiz, double *ux, double *uy, double *uz)
{
    const sw_grid *g = r->g;
    const size_t off = j * g->nx;
    double *rx = ux ? ux + off : NULL, *ry = uy ? uy + off : NULL, *rz = uz ? uz + off : NULL;
    size_t i0, i1;
    if (isinf(f->window_m)) {
        ok_add_span(f, r, horiz, 0, g->nx, rx, ry, rz);
        return;
    }
    if (!r->slam) {
        const double dn = r->yc - f->y_m, D = f->window_m;
        if (fabs(dn) > D)
            return;
        const double half = sqrt(D * D - dn * dn);
        ok_columns(g, f->x_m - half, f->x_m + half, &i0, &i1);
        ok_add_span(f, r, horiz, i0, i1, rx, ry, rz);
        return;
    }
    /* the spherical cap of angular radius D / R: hav(c) = hav(dphi) + cos phi_f cos phi hav(dlambda) */
    const double ang = f->window_m / f->radius;
    if (ang >= OK_PI) {
        ok_add_span(f, r, horiz, 0, g->nx, rx, ry, rz);
        return;
    }
    const double hD = sin(0.5 * ang) * sin(0.5 * ang);
    const double sh = sin(0.5 * (r->yc / f->radius - f->phi)), hphi = sh * sh;
    if (hphi > hD)
        return;
    const double den = f->cphi * r->cphi;
    const double s = den > 0.0 ? (hD - hphi) / den : 2.0;
    if (s >= 1.0) {
        ok_add_span(f, r, horiz, 0, g->nx, rx, ry, rz);
        return;
    }
    const double dlam = 2.0 * asin(sqrt(s));   /* < pi: the three spans below do not overlap */
    for (int w = -1; w <= 1; w++) {
        const double centre = (f->lam + OK_2PI * (double)w) * f->radius;
        ok_columns(g, centre - dlam * f->radius, centre + dlam * f->radius, &i0, &i1);
        if (i1 > i0)
            ok_add_span(f, r, horiz, i0, i1, rx, ry, rz);
    }
}

sw_status sw_okada_field(const sw_okada_fault *f, size_t n, const sw_grid *g, double cutoff, double *ux, double *uy,
                         double *uz, sw_error *err)
{
    if (!g || (n > 0 && !f))
        return sw_fail(err, SW_ERR_USAGE, "okada: no grid or no faults given");
    const int geo = sw_grid_geographic(g);
    if (geo && !(g->radius_m > 0.0))
        return sw_fail(err, SW_ERR_USAGE, "okada: the geographic grid has no sphere radius");
    if (!(g->dx_m > 0.0 && g->dy_m > 0.0))
        return sw_fail(err, SW_ERR_USAGE, "okada: the grid's cell size %g x %g m is not positive", g->dx_m, g->dy_m);
    if (isnan(cutoff))
        return sw_fail(err, SW_ERR_USAGE, "okada: the cutoff is not a number");
    for (size_t k = 0; k < n; k++) {
        sw_status st = ok_check(&f[k], k, err);
        if (st != SW_OK)
            return st;
    }
    if (n == 0 || (!ux && !uy && !uz) || g->nx == 0 || g->ny == 0)
        return SW_OK;

    ok_fault *of = malloc(n * sizeof *of);
    double *slam = NULL;
    if (geo)
        slam = malloc(2 * g->nx * sizeof *slam);
    if (!of || (geo && !slam)) {
        free(of);
        free(slam);
        return sw_fail(err, SW_ERR_NOMEM, "okada: out of memory for %zu faults on %zu x %zu cells", n, g->nx, g->ny);
    }
    for (size_t k = 0; k < n; k++)
        ok_prepare(&f[k], g, cutoff, &of[k]);
    double *clam = geo ? slam + g->nx : NULL;
    for (size_t i = 0; geo && i < g->nx; i++) {
        const double lam = sw_grid_xc(g, i) / g->radius_m;
        slam[i] = sin(lam);
        clam[i] = cos(lam);
    }
    const int horiz = ux != NULL || uy != NULL;

    /* rows dealt out four at a time: faults often crowd one part of the grid, and whole halves would not
     * balance; which thread computes a row changes no value */
    SW_OMP(parallel for schedule(static, 4))
    for (size_t j = 0; j < g->ny; j++) {
        ok_row r = {.g = g, .slam = slam, .clam = clam, .yc = sw_grid_yc(g, j), .sphi = 0.0, .cphi = 1.0};
        if (geo) {
            const double phi = r.yc / g->radius_m;
            r.sphi = sin(phi);
            r.cphi = cos(phi);
        }
        for (size_t k = 0; k < n; k++)
            ok_add_row(&of[k], &r, j, horiz, ux, uy, uz);
    }
    free(of);
    free(slam);
    return SW_OK;
}

double sw_okada_moment(const sw_okada_fault *f, double rigidity_pa)
{
    return rigidity_pa * f->length_m * f->width_m * f->slip_m;
}

double sw_moment_magnitude(double m0_nm)
{
    return m0_nm > 0.0 ? (2.0 / 3.0) * (log10(m0_nm) - 9.1) : -INFINITY;
}
