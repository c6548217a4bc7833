/* ferrocirc — the exported element-type tables (one per file in elements/).
 *
 * Each elements/NAME.c defines `static const fc_elem_type table` and exports exactly one pointer
 * to it; src/registry.c lists the pointers. The tables are never modified. */
#ifndef FERROCIRC_ELEM_TYPES_H
#define FERROCIRC_ELEM_TYPES_H

#include "elem.h"

extern const fc_elem_type *const fci_type_reservoir;        /* elements/reservoir.c */
extern const fc_elem_type *const fci_type_channel;          /* elements/channel.c */
extern const fc_elem_type *const fci_type_resistor;         /* elements/resistor.c */
extern const fc_elem_type *const fci_type_chamber;          /* elements/chamber.c */
extern const fc_elem_type *const fci_type_flow_source;      /* elements/flow_source.c */
extern const fc_elem_type *const fci_type_pressure_source;  /* elements/pressure_source.c */
extern const fc_elem_type *const fci_type_check_valve;      /* elements/check_valve.c */
extern const fc_elem_type *const fci_type_ferrofluid_valve; /* elements/ferrofluid_valve.c */

/* elements/_template.c: the pattern to copy for a new type; deliberately not registered. */
extern const fc_elem_type *const fci_type_template;

#endif
