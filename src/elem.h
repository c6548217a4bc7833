/* ferrocirc — internal interface of element types (the only header elements/ includes).
 *
 * An element type is a static const table of method pointers (fc_elem_type); elements/NAME.c
 * defines one and exports one pointer `fci_type_NAME`; src/registry.c lists them all. Tables are
 * never modified; slots are only appended (bump FC_ELEM_V). A NULL optional slot means "none".
 *
 * The engine sees four roles, set per instance by xParse:
 *   FC_ROLE_FLOW   two terminals; flow q from -> to [m^3/s] = xFlow(t, pa, pb, own states)
 *   FC_ROLE_STORE  one terminal; a compliance C(p) [m^3/Pa] at its node and its stored volume
 *                  V(t, p) (a driven membrane: V = C (p - p_back(t)); the volume is the state, so
 *                  the drive enters through V and needs no injected flow)
 *   FC_ROLE_FIX    one terminal; imposes the node pressure p(t) = xFix(t)
 *   FC_ROLE_LINK   two terminals; imposes p(to) - p(from) = xFix(t); its flow follows from
 *                  conservation at the driven node
 * Pressures are gauge [Pa], SI everywhere. Elements never see SUNDIALS: plain doubles only. */
#ifndef FERROCIRC_ELEM_H
#define FERROCIRC_ELEM_H

#include <stddef.h>
#include <stdio.h>

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"
#include "ferrocirc/waveform.h"

struct cJSON;

#define FC_ELEM_V 3       /* version of fc_elem_type */
#define FCI_MAX_OWN 4     /* most own ODE states one element may have */
#define FCI_MAX_ROOT 4    /* most event functions one element may have */

enum { FC_ROLE_FLOW = 1, FC_ROLE_STORE, FC_ROLE_FIX, FC_ROLE_LINK };

typedef struct fci_fluid {
  double viscosity;  /* dynamic viscosity [Pa s] */
  double density;    /* [kg/m^3] */
  double ambient;    /* absolute ambient pressure [Pa], for gas bubbles */
} fci_fluid;

typedef struct fci_parse_ctx {
  const fc_units  *units;   /* unit system for quantity strings */
  const fci_fluid *fluid;   /* already parsed: elements may use it (e.g. R from mu) */
  const char      *basedir; /* folder of the network file, for linked files ("" = cwd) */
  const char      *file;    /* network file name, for messages */
} fci_parse_ctx;

typedef struct fc_elem_type fc_elem_type;

typedef struct fc_elem {
  const fc_elem_type *type;
  char  *id;                 /* unique element id */
  char  *path;               /* JSON path of the element object, e.g. "$.elements[3]" */
  int    role;               /* FC_ROLE_* */
  int    nTerm;              /* 1 or 2 */
  int    node[2];            /* node indices: (from, to) or (node, -1) */
  int    nState;             /* own ODE states of this instance (<= FCI_MAX_OWN) */
  int    nRoot;              /* event functions of this instance (<= FCI_MAX_ROOT) */
  int    iState;             /* offset of own states in the global state vector (engine) */
  int    iRoot;              /* offset of own roots in the global root vector (engine) */
  int    mode;               /* discrete state (valve: 0 sealed, 1 fwd, -1 rev, 2 blown) */
  int    culture;            /* 1 if flagged as a culture region (report wall shear) */
  double hold_until;         /* set by the engine's chatter regularisation: until then a valve
                                stays open (it may still blow out); 0 = no hold */
  void  *param;              /* type's parameter struct, type->szParam bytes, zeroed */
} fc_elem;

/* Flow of a FC_ROLE_FLOW element and its partial derivatives. */
typedef struct fci_flow {
  double q;                  /* flow from -> to [m^3/s] */
  double dq_dpa, dq_dpb;     /* d q / d p(from), d q / d p(to) [m^3/(Pa s)] */
  double dq_dx[FCI_MAX_OWN]; /* d q / d own state k */
} fci_flow;

/* Static description used by `check`, the summary and the shear report. */
typedef struct fci_info {
  double resistance;         /* small-signal resistance [Pa s/m^3], 0 if not applicable */
  double compliance;         /* compliance at 0 gauge [m^3/Pa], 0 if none */
  double inertance;          /* [Pa s^2/m^3], 0 if none */
  double shear_per_flow;     /* wall shear stress per unit flow [Pa/(m^3/s)], 0 if unknown */
  double period;             /* period of a periodic source [s], 0 if none */
  double blowout_forward;    /* valves: |dp| at which it is lost for good, from->to [Pa]; 0 none */
  double blowout_reverse;    /* the same for to->from [Pa] */
  char   text[160];          /* one-line human description, SI */
  int    no_text;            /* set by a caller that needs only the numbers: text may stay
                              * empty (formatting it costs more than the rest, per element) */
} fci_info;

struct fc_elem_type {
  int         version;       /* FC_ELEM_V */
  const char *name;          /* JSON "type"; unique across the registry */
  size_t      szParam;       /* bytes of the parameter struct (may be 0) */
  int         nTermDefault;  /* 1: takes "node"; 2: takes "from" and "to" */
  int         fLinear;       /* 1 if xFlow is affine in (pa, pb) within one mode */
  const char *const *keys;   /* NULL-terminated list of the type's own JSON keys (besides id,
                                type, from, to, node, note), for unknown-key errors */

  /* Required. Read the type's keys from obj (at JSON path `path`) into e->param, in SI; set
   * e->role and, if not 0, e->nState / e->nRoot / e->culture. Return FC_OK or an error naming
   * the full JSON path of the offending key. */
  int (*xParse)(fc_elem *e, const struct cJSON *obj, const char *path,
                const fci_parse_ctx *ctx, fc_error *err);

  /* Optional. Free what xParse allocated inside e->param (not e->param itself). */
  void (*xFree)(fc_elem *e);

  /* FLOW: flow and partials at time t, terminal pressures p[0]=from, p[1]=to, own states x. */
  void (*xFlow)(const fc_elem *e, double t, const double p[2], const double *x, fci_flow *out);

  /* Optional (nState > 0): own state derivatives dxdt[k] and the Jacobian rows
   * J[k*(2+nState) + j], j = 0: d/dp(from), 1: d/dp(to), 2+m: d/dx_m. Return 0 ok, >0
   * recoverable (the integrator retries with a smaller step), <0 fatal. */
  int (*xRhs)(const fc_elem *e, double t, const double p[2], const double *x, double *dxdt,
              double *J);

  /* STORE: compliance C(p) [m^3/Pa] > 0 and its derivative dC/dp. */
  void (*xStore)(const fc_elem *e, double t, double p, double *C, double *dC_dp);

  /* STORE, optional: volume stored relative to 0 gauge, V(p) - V(0) [m^3] (conservation check,
   * exact for nonlinear compliances). For a driven store: relative to p - p_back(t). */
  double (*xVolume)(const fc_elem *e, double t, double p);

  /* FIX: node pressure at t. LINK: p(to) - p(from) at t. [Pa] */
  double (*xFix)(const fc_elem *e, double t);

  /* Optional (nRoot > 0): event functions g[0..nRoot-1]; a zero crossing is a mode switch. */
  void (*xRoot)(const fc_elem *e, double t, const double p[2], const double *x, double *g);

  /* Optional: at a root (found[k] = +1 rising, -1 falling, 0 not this one), change e->mode.
   * Return 1 if the mode changed (the integrator is re-initialised), 0 if not. Also called with
   * every found[k] == 0 when a hold (hold_until) ends: then re-check the mode against p. */
  int (*xEvent)(fc_elem *e, double t, const int *found, const double p[2], const double *x);

  /* Optional: fill the static description (all fields zeroed by the caller). */
  void (*xInfo)(const fc_elem *e, const fci_fluid *fluid, fci_info *info);

  /* Optional: the first time > t where the element's forcing has a derivative jump, else
   * +INFINITY (waveform corners); the integrator stops there. *smooth: 1 if only the second or
   * a higher derivative jumps there (fc_waveform_corners_smooth), so no restart is needed. */
  double (*xCorner)(const fc_elem *e, double t, int *smooth);

  /* Optional (v2): 1 if the instance's law, in its current mode, is linear with constant
   * coefficients and no own states, with the coefficients in k; 0 if not. FLOW: q = k[0] +
   * k[1] p(from) + k[2] p(to) for every t. STORE: stored volume V - V(0) = k[0] p with constant
   * compliance k[0] > 0 and no injected flow. The engine then evaluates the element from cached
   * coefficients in contiguous arrays, re-read after every mode switch; xFlow / xStore must agree
   * with them. */
  int (*xLinear)(const fc_elem *e, double k[3]);
};

/* ---- Registry (src/registry.c) ---- */
const fc_elem_type *fci_registry_find(const char *name);
/* NULL-terminated list of every registered type. */
const fc_elem_type *const *fci_registry_all(void);

/* ---- Parse helpers for element files (src/parse_util.c) ---- */
/* Quantity under `key` of obj. required: missing is an error; else *out = def when missing.
 * Checks finiteness; `positive`: must be > 0, `nonneg`: must be >= 0 (flags FCI_POS, FCI_NONNEG). */
enum { FCI_ANY = 0, FCI_POS = 1, FCI_NONNEG = 2 };
int fci_get_quantity(const struct cJSON *obj, const char *key, fc_dim dim, int required,
                     double def, int sign, double *out, const char *path,
                     const fci_parse_ctx *ctx, fc_error *err);
/* Boolean under key (default def). */
int fci_get_bool(const struct cJSON *obj, const char *key, int def, int *out, const char *path,
                 fc_error *err);
/* Waveform under key; required or default constant `def`. */
int fci_get_waveform(const struct cJSON *obj, const char *key, fc_dim dim, int required,
                     double def, fc_waveform **out, const char *path, const fci_parse_ctx *ctx,
                     fc_error *err);
/* Object under key (NULL if missing and not required). */
int fci_get_object(const struct cJSON *obj, const char *key, int required,
                   const struct cJSON **out, const char *path, fc_error *err);
/* Optimal-string-alignment edit distance (INT_MAX for names over 64 characters), and the
 * largest distance that still reads as a typo of a name of length len. */
int fci_typo_distance(const char *a, const char *b);
int fci_typo_limit(size_t len);
/* Check that every key of obj is in one of the NULL-terminated lists (either may be NULL);
 * the error for an unknown key suggests the nearest allowed key ("did you mean ...?"). */
int fci_check_keys(const struct cJSON *obj, const char *const *keys1,
                   const char *const *keys2, const char *path, fc_error *err);
/* Write "PATH.KEY" into buf (size n); returns buf. */
const char *fci_path_key(char *buf, size_t n, const char *path, const char *key);

#endif
