/* ferrocirc — internal: the quick table of common units (src/units.c), for tests. */
#ifndef FERROCIRC_UNITS_QUICK_H
#define FERROCIRC_UNITS_QUICK_H

#include <stddef.h>

#include "ferrocirc/units.h"

/* Entry k of the table (text, fc_dim, factor to SI, factor from SI), if k is below the table's
 * length; returns that length. */
size_t fci_units_quick(const char **text, int *dim, double *to_si, double *from_si, size_t k);
/* on = 0: every unit through the UDUNITS-2 database, as without the table. */
void fci_units_set_quick(fc_units *u, int on);

#endif
