/* ferrocirc — internal interface of the ferrofluid valve model (src/valve/ only).
 *
 * Layers, each a pure function of its inputs: magnet fields (magnet_field.c, magnet_grade.c),
 * ferrofluid magnetisation (ferrofluid.c), capillary jumps (capillary.c), sampling of a design
 * onto a line problem along the channel (plug_line.c), plug statics on that line
 * (plug_statics.c), design loading (design_*.c). Nothing here knows circuits or solvers.
 * Coordinates: x along the channel ("forward" = +x), y across it (0 on the centre line), z up,
 * the channel floor at z = 0. SI units throughout. */
#ifndef FERROCIRC_VALVE_INT_H
#define FERROCIRC_VALVE_INT_H

#include <stddef.h>
#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"
#include "ferrocirc/valve.h"
#include "elem.h"

struct cJSON;

#define FCI_MU0 1.25663706212e-6 /* N/A^2, CODATA 2018 */
#define FCI_KB  1.380649e-23     /* J/K, exact (SI 2019) */
#define FCI_GN  9.80665          /* m/s^2, exact */

/* ---- Magnets (magnet_field.c) ---- */
enum { FCI_MAG_CYLINDER = 1, FCI_MAG_BLOCK = 2 };

typedef struct fci_magnet {
  int    shape;    /* FCI_MAG_CYLINDER or FCI_MAG_BLOCK */
  double c[3];     /* centre [m] */
  double n[3];     /* unit magnetisation direction; the cylinder axis (axial magnetisation) */
  double br;       /* remanence mu0*M [T] */
  double radius;   /* cylinder radius [m] */
  double length;   /* cylinder length along its axis [m] */
  double size[3];  /* block edge lengths along x, y, z (block edges are axis-aligned) [m] */
} fci_magnet;

/* Bulirsch's complete elliptic integral cel(kc, p, c, s) (Bulirsch 1969). */
double fci_cel(double kc, double p, double c, double s);
/* Axially magnetised cylinder, local frame: radius a, half-length b, point (rho, z) from the
 * centre; Br remanence. B_rho, B_z [T] (Derby & Olbert 2010). */
void fci_cylinder_local(double a, double b, double rho, double z, double br,
                        double *brho, double *bz);
/* Block magnetised along +z, half-edges h[3], point p relative to the centre; adds Br inside. */
void fci_block_z(const double h[3], const double p[3], double br, double B[3]);
/* Field of one magnet at r (global frame), added to B. */
void fci_magnet_add_field(const fci_magnet *m, const double r[3], double B[3]);
/* Half extent of the magnet along z [m] (for placing it a gap below or above the channel). */
double fci_magnet_half_z(const fci_magnet *m);
/* Axis-aligned bounding box lo[3], hi[3]. */
void fci_magnet_box(const fci_magnet *m, double lo[3], double hi[3]);

/* ---- Grades (magnet_grade.c) ---- */
/* Nominal remanence at 20 degC and its temperature coefficient for a grade name ("N42",
 * "ferrite"); FC_EPARAM naming path if unknown. tmax: highest rated temperature [K]. */
int fci_grade_lookup(const char *name, double *br20, double *tcoef, double *tmax,
                     const char *path, fc_error *err);
/* Comma-separated list of known grades, for messages. */
const char *fci_grade_names(void);

/* ---- Ferrofluid (ferrofluid.c) ---- */
typedef struct fci_ferro {
  double ms;       /* saturation magnetisation [A/m] */
  double chi0;     /* initial susceptibility (SI, volume) */
  double hs;       /* kB T/(mu0 m) = Ms/(3 chi0): the Langevin field scale [A/m] */
  double demag;    /* demagnetising factor N, H = H0 - N M */
} fci_ferro;

double fci_langevin(double xi);          /* L(xi) = coth xi - 1/xi */
double fci_lnsinhc(double xi);           /* ln(sinh xi / xi) */
double fci_ferro_m(const fci_ferro *f, double h);    /* M(H) [A/m] */
double fci_ferro_phi(const fci_ferro *f, double h);  /* Phi(H) = int_0^H M dH' [A^2/m^2] */
/* Field inside the fluid for an applied field h0: solves H + N M(H) = h0. */
double fci_ferro_internal(const fci_ferro *f, double h0);
/* Meniscus magnetic pressure mu0 Phi(H) + mu0 Mn^2/2 [Pa] for applied flux density B (outside
 * the magnets, B = mu0 H0); the meniscus normal is along x. */
double fci_ferro_pressure(const fci_ferro *f, const double B[3]);

/* ---- Capillarity (capillary.c) ---- */
/* Young-Laplace jump Pi = p_outer - p_inner for a meniscus in a w x h rectangle, angles through
 * the ferrofluid on top, bottom, left, right walls [rad]. */
double fci_young_laplace(double gamma, double w, double h, double th_top, double th_bot,
                         double th_left, double th_right);

/* ---- The design (design_*.c) ---- */
typedef struct fci_section {
  double x0, x1;   /* start and end along the channel [m] */
  double w0, w1;   /* width at start and end (a taper if different) [m] */
  double h0, h1;   /* height at start and end [m] */
  double th_adv;   /* advancing contact angle through the ferrofluid [rad] */
  double th_rec;   /* receding contact angle [rad] */
} fci_section;

struct fc_valve_design {
  struct cJSON *tree;   /* own copy of the design object, for fc_valve_design_set */
  char   *basedir;      /* folder of the design file ("" = cwd) */
  char   *file;         /* design file, "" if inline */
  char   *name;         /* "name" or "" */
  int     nSec;
  fci_section *sec;     /* owned, contiguous in x */
  int     nMag;
  fci_magnet  *mag;     /* owned */
  fci_ferro    ff;
  double  volume;       /* plug volume [m^3] */
  double  rho_ff;       /* ferrofluid density [kg/m^3] */
  double  temperature;  /* [K] */
  double  gamma;        /* interfacial tension ferrofluid/carrier [N/m] */
  double  rho_carrier;  /* [kg/m^3] */
  int     carrier_air;  /* 1 air, 0 liquid */
  int     nPoint;       /* grid nodes along the channel */
  int     nPath;        /* paths per cross-section direction (odd), nPath^2 in all */
  int     nWarn;
  char    warn[4][200]; /* notes for the report (grade temperature, field at the ends, ...) */
};

void fci_design_warn(fc_valve_design *d, const char *fmt, ...)
#if defined(__GNUC__)
  __attribute__((format(printf, 2, 3)))
#endif
  ;
/* Section holding x (the last one for x at the very end); NULL outside the channel. */
const fci_section *fci_design_section(const fc_valve_design *d, double x);
/* Width and height at x, and the wall slopes dw/dx, dh/dx. */
void fci_design_shape(const fc_valve_design *d, double x, double *w, double *h, double *dw,
                      double *dh);
/* Parse the design object's contents into d (design_parse.c), its "magnets" array
 * (design_magnets.c). */
int fci_design_parse_body(fc_valve_design *d, const struct cJSON *obj, const char *path,
                          const fci_parse_ctx *ctx, fc_error *err);
int fci_design_parse_magnets(fc_valve_design *d, const struct cJSON *arr, const char *path,
                             const fci_parse_ctx *ctx, fc_error *err);

/* ---- Line problem and statics (plug_line.c, plug_statics.c) ---- */
typedef struct fci_line {
  int     n;        /* nodes */
  int     np;       /* paths through the cross-section */
  double *x;        /* [n] node positions [m] */
  double *vol;      /* [n] channel volume from node 0 [m^3] */
  double *pbar;     /* [n] cross-section mean of the meniscus potential [Pa] */
  double *ppath;    /* [np*n] meniscus potential along each path, path-major [Pa] */
  double *c1[3];    /* [n] Pi of a meniscus with the plug on its +x side: receding, advancing,
                       static (mean cosine) */
  double *c2[3];    /* [n] the same with the plug on its -x side */
  double *py, *pz;  /* [np] normalised path position: y/(w/2) in [-1,1], z/h in [0,1] */
} fci_line;

int  fci_line_build(const fc_valve_design *d, fci_line *L, fc_error *err);
void fci_line_free(fci_line *L);
/* The same problem seen from the other end (x -> -x); out is allocated. */
int  fci_line_mirror(const fci_line *L, fci_line *out, fc_error *err);

typedef struct fci_dir_result {
  double crack, reseat, blowout; /* [Pa] */
  double x_rest, x_crack;        /* upstream meniscus at rest and at the crack [m, line frame] */
  int    expelled;               /* 1: the whole plug is pushed out before any path leaks */
  int    path;                   /* index of the path that leaks, -1 if expelled */
  int    sealed;                 /* 0: a path is open already at rest */
} fci_dir_result;

/* Crack and reseat by the level-set model (plug_crack.c); fills crack, reseat, sealed, path,
 * x_crack of r. */
int fci_statics_crack(const fci_line *L, double volume, fci_dir_result *r, fc_error *err);
/* Push towards +x of the line: crack, reseat and blowout. FC_ESOLVE if no rest position. */
int fci_statics_push(const fci_line *L, double volume, fci_dir_result *r, fc_error *err);

/* ---- Command-line output (valve_report.c) ---- */
FILE *fci_atomic_open(const char *target, char *tmp, size_t ntmp, fc_error *err);
int   fci_atomic_close(FILE *f, const char *tmp, const char *target, fc_error *err);
void  fci_report_text(FILE *out, const fc_valve_design *d, const char *file,
                      const fc_valve_pressures *p, const char *unit, double k);
void  fci_report_json(FILE *out, const fc_valve_design *d, const fc_valve_pressures *p);
void  fci_profile_csv(FILE *out, const fc_valve_profile_point *pt, size_t n);
void  fci_vary_header(FILE *out, const char *key, const char *vunit, const char *unit);
void  fci_vary_row(FILE *out, double v, const fc_valve_pressures *p, double k, int ok);

#endif
