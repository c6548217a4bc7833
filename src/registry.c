/* ferrocirc — the one list of element types. Adding a type = one line here (and its file in
 * elements/). The JSON "type" string is the table's name; a test checks names are unique. */
#include <string.h>

#include "elem.h"
#include "elem_types.h"

static const fc_elem_type *const *all_types(void)
{
  static const fc_elem_type *list[16];
  if (!list[0]) {
    /* Filled on first use because the tables are reached through exported pointers. */
    const fc_elem_type *const src[] = {
      fci_type_reservoir, fci_type_channel,   fci_type_resistor,
      fci_type_chamber,   fci_type_flow_source, fci_type_pressure_source,
      fci_type_check_valve, fci_type_ferrofluid_valve,
    };
    for (size_t i = 0; i < sizeof src / sizeof src[0]; i++) list[i] = src[i];
  }
  return list;
}

const fc_elem_type *const *fci_registry_all(void) { return all_types(); }

const fc_elem_type *fci_registry_find(const char *name)
{
  for (const fc_elem_type *const *t = all_types(); *t; t++)
    if (strcmp((*t)->name, name) == 0) return *t;
  return NULL;
}
