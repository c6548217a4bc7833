/* ferrocirc element template — copy this file to add an element type.
 *
 * How to add a type NAME:
 *   1. cp elements/_template.c elements/NAME.c; rename every "template" to NAME.
 *   2. Write the file header: purpose, the constitutive law with its source, units, JSON keys.
 *   3. Declare `extern const fc_elem_type *const fci_type_NAME;` in src/elem_types.h and add
 *      fci_type_NAME to the list in src/registry.c. Nothing else: the build picks up every .c
 *      file in elements/.
 *   4. Add a good snippet and bad snippets (with the exact JSON path of the error) for NAME to
 *      the table in tests/test_elements.c; the battery there runs every registered type.
 * Rules: SI inside (fci_get_quantity converts unit strings); a validation error names the full
 * JSON path; list every accepted key in `keys` (the engine rejects the others); the table is
 * static const and never modified; elements see plain doubles, never the solver.
 *
 * This template is a working linear two-terminal element, q = (p_from - p_to)/R, with one key
 * "resistance" [Pa s/m^3] > 0 — the smallest complete FLOW type. It is exported as
 * fci_type_template so that it compiles warning-free, but it is deliberately NOT registered. */
#include <stdio.h>

#include "elem.h"
#include "elem_types.h"

/* One struct per type, allocated zeroed by the engine (type->szParam bytes) as e->param.
 * A trailing comment with the unit on every field. Anything allocated in xParse (waveforms,
 * tables) is freed in xFree. */
typedef struct template_param {
  double R; /* resistance [Pa s/m^3] */
} template_param;

/* Every JSON key of this type besides id, type, from, to, node, note; NULL-terminated. */
static const char *const keys[] = {"resistance", NULL};

/* Read and validate the keys, set e->role (and e->nState / e->nRoot / e->culture if used).
 * Use fci_get_quantity / fci_get_waveform / fci_get_bool / fci_get_object: they convert units,
 * check signs and name the path. On failure, free what was allocated here and return the code. */
static int template_parse(fc_elem *e, const struct cJSON *obj, const char *path,
                          const fci_parse_ctx *ctx, fc_error *err)
{
  template_param *P = e->param;
  int rc = fci_get_quantity(obj, "resistance", FC_DIM_RESISTANCE, 1, 0.0, FCI_POS, &P->R, path,
                            ctx, err);
  if (rc) return rc;
  e->role = FC_ROLE_FLOW;
  return FC_OK;
}

/* FLOW: q from -> to and its partial derivatives (the engine builds the sparse Jacobian from
 * them; tests/test_elements.c compares them with finite differences). Fill every field. */
static void template_flow(const fc_elem *e, double t, const double p[2], const double *x,
                          fci_flow *out)
{
  const template_param *P = e->param;
  (void)t;
  (void)x;
  *out = (fci_flow){0};
  out->q = (p[0] - p[1]) / P->R;
  out->dq_dpa = 1.0 / P->R;
  out->dq_dpb = -1.0 / P->R;
}

/* Optional: the same law as constant coefficients, q = k[0] + k[1] p(from) + k[2] p(to), so
 * that the engine can evaluate large networks from contiguous arrays. Return 0 where the law
 * depends on t, on own states or is nonlinear. */
static int template_linear(const fc_elem *e, double k[3])
{
  const template_param *P = e->param;
  k[0] = 0;
  k[1] = 1.0 / P->R;
  k[2] = -1.0 / P->R;
  return 1;
}

/* One line for `check` and the summary, SI numbers. */
static void template_info(const fc_elem *e, const fci_fluid *fluid, fci_info *info)
{
  const template_param *P = e->param;
  (void)fluid;
  info->resistance = P->R;
  if (info->no_text) return;
  snprintf(info->text, sizeof info->text, "template: R = %.4g Pa s/m^3", P->R);
}

/* Slots left out are NULL = "none": xFree (nothing allocated), xRhs (no own states), xStore /
 * xVolume (not a STORE), xFix (not FIX/LINK), xRoot / xEvent (no modes), xCorner (no forcing). */
static const fc_elem_type table = {
  .version = FC_ELEM_V,
  .name = "template",
  .szParam = sizeof(template_param),
  .nTermDefault = 2,
  .fLinear = 1,
  .keys = keys,
  .xParse = template_parse,
  .xFlow = template_flow,
  .xLinear = template_linear,
  .xInfo = template_info,
};

const fc_elem_type *const fci_type_template = &table;
