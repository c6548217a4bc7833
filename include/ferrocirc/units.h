/* ferrocirc — physical quantities at the edges: unit strings in, SI inside, units out.
 *
 * Backed by UDUNITS-2 (its XML database is read at most once per fc_units object, ~6 ms). A quantity in a
 * file is either a JSON number, taken as SI, or a string "NUMBER UNIT" ("10 uL/min", "500 um",
 * "0.72 mPa.s"); the unit must be convertible to the SI unit of the expected dimension. The number
 * is split from the unit by us (UDUNITS would read "3 mbar" as the unit 300 Pa). Not thread-safe:
 * use one fc_units per thread. */
#ifndef FERROCIRC_UNITS_H
#define FERROCIRC_UNITS_H

#include "ferrocirc/error.h"

typedef struct fc_units fc_units;
struct cJSON;

typedef enum fc_dim {
  FC_DIM_NONE = 0,       /* dimensionless (1) */
  FC_DIM_LENGTH,         /* m */
  FC_DIM_AREA,           /* m^2 */
  FC_DIM_VOLUME,         /* m^3 */
  FC_DIM_TIME,           /* s */
  FC_DIM_FREQUENCY,      /* Hz = 1/s */
  FC_DIM_PRESSURE,       /* Pa */
  FC_DIM_FLOW,           /* m^3/s */
  FC_DIM_VISCOSITY,      /* Pa.s */
  FC_DIM_DENSITY,        /* kg/m^3 */
  FC_DIM_RESISTANCE,     /* Pa.s/m^3 (hydraulic) */
  FC_DIM_CONDUCTANCE,    /* m^3/(Pa.s) (hydraulic) */
  FC_DIM_COMPLIANCE,     /* m^3/Pa */
  FC_DIM_INERTANCE,      /* Pa.s^2/m^3 */
  FC_DIM_TENSION,        /* N/m (surface/interfacial tension) */
  FC_DIM_FIELD,          /* A/m (magnetic field H, magnetisation M) */
  FC_DIM_FLUX_DENSITY,   /* T (magnetic flux density B, remanence) */
  FC_DIM_ANGLE,          /* rad ("deg" accepted) */
  FC_DIM_TEMPERATURE,    /* K ("degC" accepted, offset applied) */
  FC_DIM_STRESS,         /* Pa, for wall shear stress (same unit as pressure) */
  FC_DIM_COUNT
} fc_dim;

/* Open the unit system. The UDUNITS-2 database is read on first need, by the first call that
 * meets a unit outside a built-in table of common ones ("mbar", "uL/min", "um", ...; their
 * factors are the database's own); a missing database is reported by that call (FC_EIO). */
int fc_units_open(fc_units **out, fc_error *err);
void fc_units_free(fc_units *u);

/* SI unit symbol of a dimension ("Pa", "m3/s", ...), for messages and headers. */
const char *fc_dim_si_name(fc_dim dim);
/* Human name of a dimension ("pressure"), for messages. */
const char *fc_dim_name(fc_dim dim);

/* Parse "NUMBER UNIT" (or "NUMBER" alone for FC_DIM_NONE; a bare number for other dimensions is
 * an error because it is ambiguous as a string) into SI. `path` names the value in messages. */
int fc_units_parse(const fc_units *u, const char *text, fc_dim dim, double *si,
                   const char *path, fc_error *err);

/* A JSON value that is a number (SI), a string with a unit, or a toleranced value (below);
 * rejects NaN/inf and other types. */
int fc_units_json(const fc_units *u, const struct cJSON *item, fc_dim dim, double *si,
                  const char *path, fc_error *err);

/* A value with a manufacturing tolerance (design studies sample it; single runs use the value). */
typedef struct fc_tolerance {
  double half_width;  /* normal: 2 sigma; uniform: half the range [SI] */
  int    uniform;     /* 1 uniform, 0 normal */
} fc_tolerance;

/* {"value": V, "tolerance": "±T", "distribution": "normal"|"uniform"}: *si = V; *tol (may be
 * NULL) the tolerance. fc_units_json accepts this form wherever a quantity is expected. */
int fc_units_json_toleranced(const fc_units *u, const struct cJSON *obj, fc_dim dim, double *si,
                             fc_tolerance *tol, const char *path, fc_error *err);

/* For output: factor such that value_in_unit = si * factor (dimensions without offset only).
 * FC_EPARAM with a message naming `what` if the unit does not parse or has the wrong dimension. */
int fc_units_out_factor(const fc_units *u, const char *unit, fc_dim dim, double *factor,
                        const char *what, fc_error *err);

/* Convert x from unit text `from` to `to` ("" = dimensionless number); FC_EPARAM if not
 * convertible. */
int fc_units_convert(const fc_units *u, double x, const char *from, const char *to, double *y,
                     fc_error *err);

#endif
