/* ferrocirc — the ferrofluid valve model: from magnets, ferrofluid and channel to the valve's
 * cracking, reseat and blowout pressures.
 *
 * A design (JSON object, format "ferrocirc-valve/1"; docs/valve-model.md) names a channel along
 * x made of sections (width, height, tapers, steps), magnets (cylinders and blocks, any number,
 * each with position, magnetisation direction and remanence or grade), a ferrofluid plug
 * (Langevin magnetisation from Ms and chi0 or particle data, volume, contact angles) and the
 * carrier ("air" or "liquid", interfacial tension). "Forward" is flow towards +x, i.e. a valve
 * element's from -> to. Which direction is the easy one follows from the design alone.
 *
 * Model (sources and assumptions in docs/valve-model.md): ferrohydrostatic Bernoulli equation
 * (Neuringer & Rosensweig 1964) along paths through the cross-section plus Young-Laplace menisci;
 * the plug leaks first along the path where the field is weakest (crack), and is expelled as a
 * whole when the cross-section-averaged support is exceeded everywhere downstream (blowout).
 * Quasi-static; no magnetoviscous effect. A design aid: confirm on the bench. */
#ifndef FERROCIRC_VALVE_H
#define FERROCIRC_VALVE_H

#include <stddef.h>

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"

struct cJSON;

/* ===================== Designs ===================== */
typedef struct fc_valve_design fc_valve_design;

/* Parse a design from obj at JSON `path` ("$" for a file root). obj is the design object itself
 * (inline, "format" optional but must be "ferrocirc-valve/1" if present), or {"file": "x.json"}
 * naming a design file relative to basedir (NULL or "" = cwd). u: the unit system (borrowed).
 * On success *out is owned by the caller (fc_valve_design_free). Errors name the JSON path. */
int fc_valve_design_parse(const struct cJSON *obj, const char *path, const fc_units *u,
                          const char *basedir, fc_valve_design **out, fc_error *err);

/* Load a design file. err->file is set on every error; line/col for syntax errors and, via the
 * JSON path, for errors in values. */
int fc_valve_design_load(const char *file, const fc_units *u, fc_valve_design **out,
                         fc_error *err);

/* Free a design; NULL is a no-op. */
void fc_valve_design_free(fc_valve_design *d);

/* A new design equal to d with one numeric value replaced, for parameter studies. key is a path
 * relative to the design root ("magnets[0].gap", "$.ferrofluid.volume"); value is a JSON number
 * (SI) or a quantity string "0.5 mm". The key's parent must exist; the key itself may be new
 * (the re-parse rejects unknown keys). *out is owned by the caller. */
int fc_valve_design_set(const fc_valve_design *d, const char *key, const char *value,
                        const fc_units *u, fc_valve_design **out, fc_error *err);

/* "name" of the design, "" if none. */
const char *fc_valve_design_name(const fc_valve_design *d);
/* Notes gathered while loading (e.g. magnet above its rated temperature); NULL past the end. */
const char *fc_valve_design_note(const fc_valve_design *d, int i);

/* ===================== Pressures ===================== */
typedef struct fc_valve_pressures {
  double crack_forward;   /* pressure difference p(-x side) - p(+x side) that opens it [Pa] */
  double crack_reverse;   /* p(+x side) - p(-x side) that opens it [Pa] */
  double reseat_forward;  /* after a forward crack, it seals again below this [Pa] */
  double reseat_reverse;  /* the same after a reverse crack [Pa] */
  double blowout;         /* the lower of the two below: the valve is lost for good [Pa] */
  double blowout_forward; /* whole plug pushed out towards +x [Pa] */
  double blowout_reverse; /* whole plug pushed out towards -x [Pa] */
  double x_rest;          /* plug centre at rest [m] */
  double x_crack_forward; /* plug centre when it cracks forward [m] */
  double x_crack_reverse; /* plug centre when it cracks reverse [m] */
  int    expelled_forward;/* 1 if the plug is pushed out forward before any path leaks */
  int    expelled_reverse;/* the same in reverse */
  double leak_y_forward, leak_z_forward; /* where the forward leak path crosses the section
                                            (y/(w/2) in [-1,1], z/h in [0,1]); NaN if expelled */
  double leak_y_reverse, leak_z_reverse; /* the same for the reverse leak */
  int    sealed;          /* 0 if some path is open already at rest (the plug does not fill
                             the section where the field is weak): crack is then 0 */
  double end_fraction;    /* mean magnetic pressure at the channel ends / its maximum; when not
                             small, the blowout values are bounded by the channel length */
} fc_valve_pressures;

/* Solve the statics of the design. FC_ESOLVE (with a message) if the field holds the plug at
 * no stable position inside the channel. A symmetric design gives equal forward and reverse
 * values. Pure: d is not modified. */
int fc_valve_design_solve(const fc_valve_design *d, fc_valve_pressures *out, fc_error *err);

/* Resistance of the open valve [Pa s/m^3]: its channel sections in series, exact rectangular
 * series, for a carrier of the given viscosity [Pa s] (src/valve/valve_open.c). */
double fc_valve_design_open_resistance(const fc_valve_design *d, double viscosity);

/* ===================== Fields and profiles ===================== */
/* Flux density of all magnets at r = (x, y, z) [m], outside the magnets [T]. */
void fc_valve_field(const fc_valve_design *d, const double r[3], double B[3]);

typedef struct fc_valve_profile_point {
  double x, width, height;              /* [m] */
  double b_floor, b_centre, b_roof;     /* |B| on the centre line at z = 0, h/2, h [T] */
  double b_min, b_mean, b_max;          /* |B| over the cross-section [T] */
  double p_min, p_mean, p_max;          /* meniscus magnetic pressure mu0 Phi(H) + mu0 Mn^2/2
                                           over the cross-section [Pa] */
} fc_valve_profile_point;

/* Profile along the channel on the design's grid; *pts (count *n) is owned by the caller,
 * freed with fc_free. */
int fc_valve_design_profile(const fc_valve_design *d, fc_valve_profile_point **pts, size_t *n,
                            fc_error *err);

/* ===================== Command line ===================== */
/* `ferrocirc valve DESIGN.json [--profile OUT.csv] [--json] [--unit U]
 *                  [--vary PATH=FROM..TO --steps N [-o OUT.csv]]`; argv[0] is "valve".
 * Returns the process exit status: 0 ok, 2 bad input or usage, 1 I/O or other failure. */
int fc_valve_cli(int argc, char **argv);

#endif
