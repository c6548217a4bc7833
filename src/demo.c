/* ferrocirc — the built-in demo network: an invented organ-on-chip scenario.
 * A diaphragm-like pump ejects culture medium in heart-like beats (1 Hz, a third of the cycle
 * ejecting) from a supply reservoir, through a bubble trap (an air pocket acting as compliance),
 * a feed channel, a flat culture chamber (the cells' wall shear is reported) and drain tubing,
 * to a waste reservoir whose liquid stands 5 mm high. All numbers are made up but typical. */
#include "cli.h"

const char fci_demo_network[] =
  "{\n"
  "  \"format\": \"ferrocirc-network/1\",\n"
  "  \"title\": \"demo: beating pump, bubble trap, culture chamber\",\n"
  "  \"fluid\": {\"name\": \"culture medium (water-like)\", \"viscosity\": \"0.78 mPa.s\",\n"
  "            \"density\": \"1007 kg/m3\"},\n"
  "  \"elements\": [\n"
  "    {\"id\": \"supply\", \"type\": \"reservoir\", \"node\": \"supply\"},\n"
  "    {\"id\": \"pump\", \"type\": \"flow_source\", \"from\": \"supply\", \"to\": \"pump_out\",\n"
  "     \"flow\": {\"shape\": \"beat\", \"peak\": \"40 uL/min\", \"period\": \"1 s\",\n"
  "              \"systolic_fraction\": 0.333333333333}},\n"
  "    {\"id\": \"bubble_trap\", \"type\": \"chamber\", \"node\": \"pump_out\",\n"
  "     \"gas_volume\": \"2 uL\"},\n"
  "    {\"id\": \"feed\", \"type\": \"channel\", \"from\": \"pump_out\", \"to\": \"chamber_in\",\n"
  "     \"length\": \"20 mm\", \"width\": \"200 um\", \"height\": \"100 um\"},\n"
  "    {\"id\": \"culture\", \"type\": \"channel\", \"from\": \"chamber_in\", \"to\": \"chamber_out\",\n"
  "     \"length\": \"6 mm\", \"width\": \"1 mm\", \"height\": \"100 um\", \"culture\": true},\n"
  "    {\"id\": \"chamber_wall\", \"type\": \"chamber\", \"node\": \"chamber_in\",\n"
  "     \"compliance\": \"2e-14 m3/Pa\"},\n"
  "    {\"id\": \"drain\", \"type\": \"channel\", \"from\": \"chamber_out\", \"to\": \"waste\",\n"
  "     \"length\": \"150 mm\", \"diameter\": \"250 um\", \"inertance\": true},\n"
  "    {\"id\": \"waste\", \"type\": \"reservoir\", \"node\": \"waste\", \"liquid_height\": \"5 mm\"}\n"
  "  ],\n"
  "  \"simulation\": {\"cycles\": 20, \"sample_interval\": \"10 ms\"},\n"
  "  \"report\": {\"pressure_unit\": \"mbar\", \"flow_unit\": \"uL/min\"}\n"
  "}\n";
