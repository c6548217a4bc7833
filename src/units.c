/* ferrocirc — unit strings in, SI inside (see include/ferrocirc/units.h).
 *
 * UDUNITS-2 does the unit algebra; we split "NUMBER UNIT" ourselves (UDUNITS would read "3 mbar"
 * as the unit 300 Pa) and check the dimension (same_dimension below) against the SI unit of the
 * expected fc_dim. A few symbols of the database are corrected or added at open time:
 *   torr, Torr  UDUNITS makes torr an alias of mmHg (133.322 387 415 Pa); the torr is
 *               101 325/760 Pa = 133.322 368 4 Pa exactly (NIST SP 811, App. B), 1.4e-7 apart.
 *   Oe          UDUNITS defines 79.57747 A/m (7 digits); 1 Oe = 1000/(4 pi) A/m (NIST SP 811),
 *               2e-8 relative apart.
 *   rpm, bpm    UDUNITS rpm is 2 pi/60 rad/s, which as a frequency would mean 0.105 Hz per rpm;
 *               we mean revolutions (or beats) per minute = 1/60 Hz.
 *   deg, P, G   added: arc degree, poise (so "cP" works), gauss.
 * mmHg (13 595.1 kg/m3 * gn * 1 mm = 133.322 387 415 Pa), cmH2O (98.0665 Pa) and psi agree with the
 * conventional values of NIST SP 811 to better than 1e-12 and are used as they are. */
#include "ferrocirc/units.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <udunits2.h>

#include "elem.h" /* fci_check_keys */
#include "ferrocirc/alloc.h"
#include "units_quick.h"

#define UNIT_TEXT_MAX 200 /* longest quantity string we accept */

struct fc_units {
  ut_system *sys;              /* NULL until a unit outside the quick table is met */
  ut_unit   *si[FC_DIM_COUNT]; /* SI unit of each dimension */
  int        no_quick;         /* 1: every unit through the database (tests) */
};

/* The unit strings of most files. Reading the UDUNITS-2 database costs about 25 million
 * instructions (~6 ms), most of a small run's time, so these are converted from this table and
 * the database is read only when another unit turns up. Each factor is the one UDUNITS-2 gives,
 * bit for bit: to_si = the converter unit -> SI applied to 1, from_si = SI -> unit applied to
 * 1 (tests/test_units.c compares every entry, and v * to_si with the converter's own result
 * for random v, against the database). Pressure units serve stresses too. */
typedef struct quick_unit {
  const char *text;
  fc_dim dim;
  double to_si, from_si;
} quick_unit;

static const quick_unit quick[] = {
  {"Pa", FC_DIM_PRESSURE, 1, 1},
  {"mPa", FC_DIM_PRESSURE, 0.001, 1000},
  {"kPa", FC_DIM_PRESSURE, 1000, 0.001},
  {"mbar", FC_DIM_PRESSURE, 100, 0.01},
  {"bar", FC_DIM_PRESSURE, 100000, 1e-05},
  {"mmHg", FC_DIM_PRESSURE, 133.322387415, 0.0075006157584565629},
  {"psi", FC_DIM_PRESSURE, 6894.757293168359, 0.00014503773773020927},
  {"cmH2O", FC_DIM_PRESSURE, 98.0665, 0.010197162129779282},
  {"m", FC_DIM_LENGTH, 1, 1},
  {"mm", FC_DIM_LENGTH, 0.001, 1000},
  {"um", FC_DIM_LENGTH, 1e-06, 1000000},
  {"\u00b5m", FC_DIM_LENGTH, 1e-06, 1000000},  /* micro sign */
  {"\u03bcm", FC_DIM_LENGTH, 1e-06, 1000000},  /* Greek mu */
  {"cm", FC_DIM_LENGTH, 0.01, 100},
  {"m3", FC_DIM_VOLUME, 1, 1},
  {"uL", FC_DIM_VOLUME, 1.0000000000000003e-09, 999999999.99999976},
  {"nL", FC_DIM_VOLUME, 1.0000000000000004e-12, 999999999999.99963},
  {"mL", FC_DIM_VOLUME, 1.0000000000000002e-06, 999999.99999999988},
  {"m3/s", FC_DIM_FLOW, 1, 1},
  {"uL/min", FC_DIM_FLOW, 1.6666666666666671e-11, 59999999999.999985},
  {"\u00b5L/min", FC_DIM_FLOW, 1.6666666666666671e-11, 59999999999.999985},
  {"\u03bcL/min", FC_DIM_FLOW, 1.6666666666666671e-11, 59999999999.999985},
  {"uL/s", FC_DIM_FLOW, 1.0000000000000003e-09, 999999999.99999976},
  {"nL/min", FC_DIM_FLOW, 1.6666666666666673e-14, 59999999999999.977},
  {"nL/s", FC_DIM_FLOW, 1.0000000000000004e-12, 999999999999.99963},
  {"mL/min", FC_DIM_FLOW, 1.666666666666667e-08, 59999999.999999985},
  {"mL/h", FC_DIM_FLOW, 2.7777777777777782e-10, 3599999999.9999995},
  {"s", FC_DIM_TIME, 1, 1},
  {"ms", FC_DIM_TIME, 0.001, 1000},
  {"min", FC_DIM_TIME, 60, 0.016666666666666666},
  {"Hz", FC_DIM_FREQUENCY, 1, 1},
  {"Pa.s", FC_DIM_VISCOSITY, 1, 1},
  {"mPa.s", FC_DIM_VISCOSITY, 0.001, 1000},
  {"kg/m3", FC_DIM_DENSITY, 1, 1},
  {"Pa.s/m3", FC_DIM_RESISTANCE, 1, 1},
  {"m3/Pa", FC_DIM_COMPLIANCE, 1, 1},
  {"N/m", FC_DIM_TENSION, 1, 1},
  {"mN/m", FC_DIM_TENSION, 0.001, 1000},
  {"A/m", FC_DIM_FIELD, 1, 1},
  {"kA/m", FC_DIM_FIELD, 1000, 0.001},
  {"T", FC_DIM_FLUX_DENSITY, 1, 1},
  {"mT", FC_DIM_FLUX_DENSITY, 0.001, 1000},
};

static const quick_unit *quick_find(const fc_units *u, const char *text, fc_dim dim)
{
  if (u->no_quick) return NULL;
  for (size_t k = 0; k < sizeof quick / sizeof quick[0]; k++)
    if ((quick[k].dim == dim || (dim == FC_DIM_STRESS && quick[k].dim == FC_DIM_PRESSURE)) &&
        !strcmp(quick[k].text, text))
      return &quick[k];
  return NULL;
}

size_t fci_units_quick(const char **text, int *dim, double *to_si, double *from_si, size_t k)
{
  size_t n = sizeof quick / sizeof quick[0];
  if (k < n) {
    *text = quick[k].text;
    *dim = (int)quick[k].dim;
    *to_si = quick[k].to_si;
    *from_si = quick[k].from_si;
  }
  return n;
}

void fci_units_set_quick(fc_units *u, int on) { u->no_quick = !on; }

typedef struct dim_info {
  const char *name;    /* human name for messages */
  const char *si;      /* SI symbol as shown to users */
  const char *ut;      /* the same, as UDUNITS parses it */
  const char *example; /* a typical quantity string */
} dim_info;

static const dim_info dims[FC_DIM_COUNT] = {
  [FC_DIM_NONE]         = {"dimensionless number", "1", "1", "0.5"},
  [FC_DIM_LENGTH]       = {"length", "m", "m", "500 um"},
  [FC_DIM_AREA]         = {"area", "m2", "m2", "0.01 mm2"},
  [FC_DIM_VOLUME]       = {"volume", "m3", "m3", "10 uL"},
  [FC_DIM_TIME]         = {"time", "s", "s", "5 s"},
  [FC_DIM_FREQUENCY]    = {"frequency", "Hz", "s-1", "2 Hz"},
  [FC_DIM_PRESSURE]     = {"pressure", "Pa", "Pa", "20 mbar"},
  [FC_DIM_FLOW]         = {"flow rate", "m3/s", "m3/s", "10 uL/min"},
  [FC_DIM_VISCOSITY]    = {"viscosity", "Pa.s", "Pa.s", "0.72 mPa.s"},
  [FC_DIM_DENSITY]      = {"density", "kg/m3", "kg/m3", "998 kg/m3"},
  [FC_DIM_RESISTANCE]   = {"hydraulic resistance", "Pa.s/m3", "Pa.s/m3", "1e12 Pa.s/m3"},
  [FC_DIM_CONDUCTANCE]  = {"hydraulic conductance", "m3/(Pa.s)", "m3/(Pa.s)", "1e-12 m3/(Pa.s)"},
  [FC_DIM_COMPLIANCE]   = {"compliance", "m3/Pa", "m3/Pa", "1e-15 m3/Pa"},
  [FC_DIM_INERTANCE]    = {"inertance", "Pa.s2/m3", "Pa.s2/m3", "1e9 Pa.s2/m3"},
  [FC_DIM_TENSION]      = {"surface tension", "N/m", "N/m", "72 mN/m"},
  [FC_DIM_FIELD]        = {"magnetic field", "A/m", "A/m", "20 kA/m"},
  [FC_DIM_FLUX_DENSITY] = {"magnetic flux density", "T", "T", "300 mT"},
  [FC_DIM_ANGLE]        = {"angle", "rad", "rad", "90 deg"},
  [FC_DIM_TEMPERATURE]  = {"temperature", "K", "K", "37 degC"},
  [FC_DIM_STRESS]       = {"stress", "Pa", "Pa", "0.5 Pa"},
};

const char *fc_dim_si_name(fc_dim dim)
{
  return (dim >= 0 && dim < FC_DIM_COUNT) ? dims[dim].si : "?";
}

const char *fc_dim_name(fc_dim dim)
{
  return (dim >= 0 && dim < FC_DIM_COUNT) ? dims[dim].name : "unknown quantity";
}

static const char *article(const char *word) { return strchr("aeiou", word[0]) ? "an" : "a"; }

/* Map `symbol` (or, if is_name, the name) to the unit `def`, replacing any existing mapping. */
static int remap(ut_system *sys, const char *symbol, int is_name, const char *def)
{
  ut_unit *u = ut_parse(sys, def, UT_ASCII);
  if (!u) return -1;
  int st;
  if (is_name) {
    ut_unmap_name_to_unit(sys, symbol, UT_ASCII);
    st = ut_map_name_to_unit(symbol, UT_ASCII, u);
  } else {
    ut_unmap_symbol_to_unit(sys, symbol, UT_ASCII);
    st = ut_map_symbol_to_unit(symbol, UT_ASCII, u);
  }
  ut_free(u);
  return st == UT_SUCCESS ? 0 : -1;
}

static int add_symbols(ut_system *sys)
{
  int bad = 0;
  bad |= remap(sys, "torr", 1, "133.32236842105263 Pa"); /* 101325/760 */
  bad |= remap(sys, "Torr", 0, "133.32236842105263 Pa");
  bad |= remap(sys, "Oe", 0, "79.577471545947668 A/m");   /* 1000/(4 pi) */
  bad |= remap(sys, "oersted", 1, "79.577471545947668 A/m");
  bad |= remap(sys, "rpm", 0, "1/min");
  bad |= remap(sys, "bpm", 0, "1/min");
  bad |= remap(sys, "deg", 0, "arc_degree");
  bad |= remap(sys, "P", 0, "poise");
  bad |= remap(sys, "G", 0, "gauss");
  return bad;
}

int fc_units_open(fc_units **out, fc_error *err)
{
  *out = fc_calloc(1, sizeof **out);
  return *out ? FC_OK : fc_fail(err, FC_ENOMEM, NULL, "out of memory opening the unit system");
}

/* Read the database on first need (a unit outside the quick table). u is const in the API:
 * the lazily read database changes no answer, only how it is found. */
static int load(const fc_units *cu, const char *path, fc_error *err)
{
  fc_units *u = (fc_units *)cu;
  if (u->sys) return FC_OK;
  ut_set_error_message_handler(ut_ignore);
  u->sys = ut_read_xml(NULL);
  if (!u->sys)
    return fc_fail(err, FC_EIO, path, "cannot read the UDUNITS-2 unit database (status %d); "
                   "is libudunits2-data installed?", (int)ut_get_status());
  if (add_symbols(u->sys)) goto fail;
  for (int d = 0; d < FC_DIM_COUNT; d++) {
    u->si[d] = ut_parse(u->sys, dims[d].ut, UT_ASCII);
    if (!u->si[d]) goto fail;
  }
  return FC_OK;
fail:
  for (int d = 0; d < FC_DIM_COUNT; d++) { ut_free(u->si[d]); u->si[d] = NULL; }
  ut_free_system(u->sys);
  u->sys = NULL;
  return fc_fail(err, FC_EIO, path, "the UDUNITS-2 database lacks a unit ferrocirc needs");
}

void fc_units_free(fc_units *u)
{
  if (!u) return;
  for (int d = 0; d < FC_DIM_COUNT; d++) ut_free(u->si[d]);
  if (u->sys) ut_free_system(u->sys);
  fc_free(u);
}

/* Strip ASCII blanks at both ends, in place. Not ut_trim: in UDUNITS 2.2.28 it shifts the text
 * left but returns a pointer advanced by the number of leading blanks ("  psi" -> "i"). */
static char *trim(char *s)
{
  while (*s == ' ' || *s == '\t' || *s == '\n' || *s == '\r') s++;
  size_t n = strlen(s);
  while (n && (s[n - 1] == ' ' || s[n - 1] == '\t' || s[n - 1] == '\n' || s[n - 1] == '\r'))
    s[--n] = '\0';
  return s;
}

/* Length of a leading decimal number (sign, digits, point, exponent) in s; 0 if none. Written by
 * hand because strtod also takes "inf", "nan" and hex floats, none of which we want. */
static size_t number_length(const char *s)
{
  size_t i = 0, nd = 0;
  if (s[i] == '+' || s[i] == '-') i++;
  while (isdigit((unsigned char)s[i])) i++, nd++;
  if (s[i] == '.') {
    i++;
    while (isdigit((unsigned char)s[i])) i++, nd++;
  }
  if (!nd) return 0;
  if (s[i] == 'e' || s[i] == 'E') {
    size_t j = i + 1;
    if (s[j] == '+' || s[j] == '-') j++;
    if (isdigit((unsigned char)s[j])) {
      while (isdigit((unsigned char)s[j])) j++;
      i = j;
    }
  }
  return i;
}

/* 1 if a and b measure the same quantity. ut_are_convertible alone is not enough: UDUNITS-2
 * also calls reciprocal units convertible (it returns 1 for "s" and "Hz"; checked with Debian
 * 12's 2.2.28), which would read a conductance as a resistance. Same dimension <=> a/b is
 * dimensionless. */
static int same_dimension(const ut_unit *a, const ut_unit *b)
{
  if (!ut_are_convertible(a, b)) return 0;
  ut_unit *q = ut_divide(a, b);
  int same = q ? ut_is_dimensionless(q) : 1; /* no quotient (offset units): trust the above */
  ut_free(q);
  return same;
}

/* The first dimension the unit measures, or -1. */
static int classify(const fc_units *u, const ut_unit *unit)
{
  for (int d = 0; d < FC_DIM_COUNT; d++)
    if (same_dimension(unit, u->si[d])) return d;
  return -1;
}

/* Parse the unit part `ustr` (already trimmed, non-empty) and check it against dim. */
static int parse_unit(const fc_units *u, const char *text, const char *ustr, fc_dim dim,
                      ut_unit **out, const char *path, fc_error *err)
{
  *out = ut_parse(u->sys, ustr, UT_UTF8);
  if (!*out)
    return fc_fail(err, FC_EPARAM, path, "\"%s\": unknown unit \"%s\"; expected %s %s such as "
                   "\"%s\"", text, ustr, article(dims[dim].name), dims[dim].name,
                   dims[dim].example);
  if (same_dimension(*out, u->si[dim])) return FC_OK;
  int got = classify(u, *out);
  ut_free(*out);
  *out = NULL;
  if (got >= 0)
    return fc_fail(err, FC_EPARAM, path, "\"%s\" is %s %s, expected %s %s (%s)", text,
                   article(dims[got].name), dims[got].name, article(dims[dim].name),
                   dims[dim].name, dims[dim].si);
  return fc_fail(err, FC_EPARAM, path, "\"%s\" has unit \"%s\", expected %s %s (%s)", text, ustr,
                 article(dims[dim].name), dims[dim].name, dims[dim].si);
}

int fc_units_parse(const fc_units *u, const char *text, fc_dim dim, double *si,
                   const char *path, fc_error *err)
{
  char buf[UNIT_TEXT_MAX + 1];
  if (strlen(text) > UNIT_TEXT_MAX)
    return fc_fail(err, FC_EPARAM, path, "quantity string longer than %d characters",
                   UNIT_TEXT_MAX);
  memcpy(buf, text, strlen(text) + 1);
  char *s = trim(buf);
  size_t n = number_length(s);
  if (!n)
    return fc_fail(err, FC_EPARAM, path, "\"%s\" does not start with a number; expected %s %s "
                   "such as \"%s\"", text, article(dims[dim].name), dims[dim].name,
                   dims[dim].example);
  char *end;
  double v = strtod(s, &end);
  if (!isfinite(v)) return fc_fail(err, FC_EPARAM, path, "\"%s\": number out of range", text);
  char *ustr = trim(s + n);
  if (!*ustr) {
    if (dim == FC_DIM_NONE) return *si = v, FC_OK;
    return fc_fail(err, FC_EPARAM, path, "\"%s\" has no unit; expected %s %s such as \"%s\" "
                   "(or a plain JSON number in %s)", text, article(dims[dim].name),
                   dims[dim].name, dims[dim].example, dims[dim].si);
  }
  const quick_unit *qu = quick_find(u, ustr, dim);
  if (qu) {
    double r = v * qu->to_si;
    if (!isfinite(r)) return fc_fail(err, FC_EPARAM, path, "\"%s\" is out of range in %s", text,
                                     dims[dim].si);
    *si = r;
    return FC_OK;
  }
  ut_unit *unit;
  int rc = load(u, path, err);
  if (rc || (rc = parse_unit(u, text, ustr, dim, &unit, path, err))) return rc;
  cv_converter *cv = ut_get_converter(unit, u->si[dim]);
  ut_free(unit);
  if (!cv) return fc_fail(err, FC_ENOMEM, path, "\"%s\": cannot convert to %s", text,
                          dims[dim].si);
  double r = cv_convert_double(cv, v);
  cv_free(cv);
  if (!isfinite(r)) return fc_fail(err, FC_EPARAM, path, "\"%s\" is out of range in %s", text,
                                   dims[dim].si);
  *si = r;
  return FC_OK;
}

/* {"value": V, "tolerance": "±T", "distribution": "normal" | "uniform"}: V is the nominal value
 * used by a single run; design studies sample it (normal: T is 2 sigma; uniform: +-T). */
int fc_units_json_toleranced(const fc_units *u, const cJSON *obj, fc_dim dim, double *si,
                             fc_tolerance *tol, const char *path, fc_error *err)
{
  static const char *const keys[] = {"value", "tolerance", "distribution", NULL};
  char p[320];
  int rc = fci_check_keys(obj, keys, NULL, path, err);
  if (rc) return rc;
  fc_tolerance t = {0, 0};
  snprintf(p, sizeof p, "%s.value", path);
  const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, "value");
  if (cJSON_IsObject(v)) return fc_fail(err, FC_EJSON, p, "expected a number or a quantity string");
  if ((rc = fc_units_json(u, v, dim, si, p, err))) return rc;
  const cJSON *tj = cJSON_GetObjectItemCaseSensitive(obj, "tolerance");
  snprintf(p, sizeof p, "%s.tolerance", path);
  if (!tj) return fc_fail(err, FC_EPARAM, p, "missing; expected a tolerance such as \"±0.05 mm\"");
  if (cJSON_IsString(tj)) {
    const char *s = tj->valuestring;
    if (!strncmp(s, "\xc2\xb1", 2)) s += 2;       /* ± */
    else if (!strncmp(s, "+-", 2) || !strncmp(s, "+/-", 3)) s += s[1] == '/' ? 3 : 2;
    if ((rc = fc_units_parse(u, s, dim, &t.half_width, p, err))) return rc;
  } else if (cJSON_IsNumber(tj) && isfinite(tj->valuedouble)) {
    t.half_width = tj->valuedouble;
  } else {
    return fc_fail(err, FC_EJSON, p, "expected a tolerance such as \"±0.05 mm\"");
  }
  if (!(t.half_width >= 0)) return fc_fail(err, FC_EPARAM, p, "must be >= 0");
  const cJSON *d = cJSON_GetObjectItemCaseSensitive(obj, "distribution");
  snprintf(p, sizeof p, "%s.distribution", path);
  if (!d || (cJSON_IsString(d) && !strcmp(d->valuestring, "normal"))) t.uniform = 0;
  else if (cJSON_IsString(d) && !strcmp(d->valuestring, "uniform")) t.uniform = 1;
  else return fc_fail(err, FC_EPARAM, p, "expected \"normal\" or \"uniform\"");
  if (tol) *tol = t;
  return FC_OK;
}

int fc_units_json(const fc_units *u, const cJSON *item, fc_dim dim, double *si,
                  const char *path, fc_error *err)
{
  if (cJSON_IsNumber(item)) {
    if (!isfinite(item->valuedouble))
      return fc_fail(err, FC_EPARAM, path, "number out of range (not finite)");
    *si = item->valuedouble;
    return FC_OK;
  }
  if (cJSON_IsString(item) && item->valuestring)
    return fc_units_parse(u, item->valuestring, dim, si, path, err);
  if (cJSON_IsObject(item) && cJSON_GetObjectItemCaseSensitive(item, "value"))
    return fc_units_json_toleranced(u, item, dim, si, NULL, path, err);
  return fc_fail(err, FC_EJSON, path, "expected %s %s: a number in SI (%s) or a string such as "
                 "\"%s\"", article(dims[dim].name), dims[dim].name, dims[dim].si,
                 dims[dim].example);
}

int fc_units_out_factor(const fc_units *u, const char *unit, fc_dim dim, double *factor,
                        const char *what, fc_error *err)
{
  char buf[UNIT_TEXT_MAX + 1];
  if (strlen(unit) > UNIT_TEXT_MAX)
    return fc_fail(err, FC_EPARAM, NULL, "%s: unit longer than %d characters", what,
                   UNIT_TEXT_MAX);
  memcpy(buf, unit, strlen(unit) + 1);
  char *s = trim(buf);
  const quick_unit *qu = quick_find(u, s, dim);
  if (qu) return *factor = qu->from_si, FC_OK;
  int rc = *s ? load(u, NULL, err) : FC_OK;
  if (rc) return rc;
  ut_unit *un = *s ? ut_parse(u->sys, s, UT_UTF8) : NULL;
  if (!un)
    return fc_fail(err, FC_EPARAM, NULL, "%s: unknown unit \"%s\"; expected a unit of %s such "
                   "as %s", what, unit, dims[dim].name, dims[dim].si);
  int ok = same_dimension(un, u->si[dim]);
  int got = ok ? (int)dim : classify(u, un);
  cv_converter *cv = ok ? ut_get_converter(u->si[dim], un) : NULL;
  ut_free(un);
  if (!ok) {
    if (got >= 0)
      return fc_fail(err, FC_EPARAM, NULL, "%s: \"%s\" is a unit of %s, expected one of %s (%s)",
                     what, unit, dims[got].name, dims[dim].name, dims[dim].si);
    return fc_fail(err, FC_EPARAM, NULL, "%s: \"%s\" is not a unit of %s (%s)", what, unit,
                   dims[dim].name, dims[dim].si);
  }
  if (!cv) return fc_fail(err, FC_ENOMEM, NULL, "%s: cannot convert to \"%s\"", what, unit);
  double f = cv_convert_double(cv, 1.0), z = cv_convert_double(cv, 0.0);
  cv_free(cv);
  /* An offset unit (degC) cannot be applied as one factor. */
  if (z != 0.0 || !isfinite(f) || f == 0.0)
    return fc_fail(err, FC_EPARAM, NULL, "%s: \"%s\" has an offset from %s; use a unit that is "
                   "a pure multiple (e.g. K)", what, unit, dims[dim].si);
  *factor = f;
  return FC_OK;
}

int fc_units_convert(const fc_units *u, double x, const char *from, const char *to, double *y,
                     fc_error *err)
{
  char a[UNIT_TEXT_MAX + 1], b[UNIT_TEXT_MAX + 1];
  if (strlen(from) > UNIT_TEXT_MAX || strlen(to) > UNIT_TEXT_MAX)
    return fc_fail(err, FC_EPARAM, NULL, "unit longer than %d characters", UNIT_TEXT_MAX);
  if (!strcmp(from, to)) { *y = x; return FC_OK; }
  int rc = load(u, NULL, err);
  if (rc) return rc;
  memcpy(a, from, strlen(from) + 1);
  memcpy(b, to, strlen(to) + 1);
  char *sa = trim(a), *sb = trim(b);
  ut_unit *ua = *sa ? ut_parse(u->sys, sa, UT_UTF8) : ut_get_dimensionless_unit_one(u->sys);
  ut_unit *ub = *sb ? ut_parse(u->sys, sb, UT_UTF8) : ut_get_dimensionless_unit_one(u->sys);
  cv_converter *cv = ua && ub && same_dimension(ua, ub) ? ut_get_converter(ua, ub) : NULL;
  if (cv) *y = cv_convert_double(cv, x);
  else rc = fc_fail(err, FC_EPARAM, NULL, "cannot convert \"%s\" to \"%s\"", from, to);
  cv_free(cv);
  if (*sa) ut_free(ua);
  if (*sb) ut_free(ub);
  return rc;
}
