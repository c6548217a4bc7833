/* ferrocirc — the hysteretic valve law shared by the element types "check_valve" and
 * "ferrofluid_valve" (elements/valve_law.c). Not an element type itself.
 *
 * States (e->mode): FCI_VALVE_SEALED 0, FCI_VALVE_FWD 1, FCI_VALVE_REV -1, FCI_VALVE_BLOWN 2.
 * With dp = p(from) - p(to):
 *   sealed       q = G_leak dp
 *   open forward q = (dp - reseat_f)/R_open   the plug still holds reseat_f while fluid passes,
 *                                             like a diode's forward drop; reseals when q -> 0
 *   open reverse q = (dp + reseat_r)/R_open
 *   blown        q = dp/R_open                permanent, both ways
 * Switching (exact, by root functions): sealed -> forward when dp rises through crack_f; sealed
 * -> reverse when dp falls through -crack_r; forward -> sealed when dp falls through reseat_f
 * (that is, when q falls to 0); reverse -> sealed when dp rises through -reseat_r; any -> blown
 * when dp rises through blowout_f or falls through -blowout_r. */
#ifndef FERROCIRC_VALVE_LAW_H
#define FERROCIRC_VALVE_LAW_H

#include "elem.h"

enum { FCI_VALVE_REV = -1, FCI_VALVE_SEALED = 0, FCI_VALVE_FWD = 1, FCI_VALVE_BLOWN = 2 };

#define FCI_VALVE_NROOT 4
/* Default leak conductance of a sealed valve [m^3/(Pa s)]: 1e-18 passes 0.06 nL/min at 1 kPa,
 * far below any flow of interest, yet keeps a node between two sealed valves determined. */
#define FCI_VALVE_LEAK_DEFAULT 1e-18

typedef struct fci_valve_law {
  double crack_f, crack_r;     /* opening thresholds [Pa] (> 0) */
  double reseat_f, reseat_r;   /* resealing thresholds [Pa] (0 <= reseat < crack) */
  double blow_f, blow_r;       /* blowout thresholds [Pa] (>= crack), INFINITY = never */
  double R_open;               /* open resistance [Pa s/m^3] */
  double G_leak;               /* sealed leak conductance [m^3/(Pa s)] (>= 0) */
} fci_valve_law;

/* Read crack_forward, crack_reverse, reseat_forward, reseat_reverse, blowout (or
 * blowout_forward/blowout_reverse), open_resistance, leak_conductance from obj; keys already
 * set in *L (from a design) are defaults that obj may override. `have_design`: thresholds may be
 * absent from obj. Checks reseat < crack <= blowout with the JSON path of the offending key. */
int fci_valve_law_parse(fci_valve_law *L, const struct cJSON *obj, const char *path,
                        const fci_parse_ctx *ctx, int have_design, fc_error *err);
void fci_valve_law_flow(const fci_valve_law *L, int mode, const double p[2], fci_flow *out);
/* The law of one mode as constant coefficients (the element types' xLinear). */
int fci_valve_law_linear(const fci_valve_law *L, int mode, double k[3]);
void fci_valve_law_roots(const fci_valve_law *L, int mode, const double p[2], double *g);
int fci_valve_law_event(const fci_valve_law *L, fc_elem *e, double t, const int *found,
                        const double p[2]);
void fci_valve_law_info(const fci_valve_law *L, fci_info *info, const char *kind);

/* Keys of the law, for the types' key lists. */
#define FCI_VALVE_LAW_KEYS "crack_forward", "crack_reverse", "reseat_forward", "reseat_reverse", \
    "blowout", "blowout_forward", "blowout_reverse", "open_resistance", "leak_conductance"

#endif
