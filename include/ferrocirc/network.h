/* ferrocirc — a hydraulic network: load, inspect, free.
 *
 * A network file is JSON, "format": "ferrocirc-network/1" (docs/network-format.md). Loading
 * parses and validates everything (units, element parameters, waveforms, topology) and keeps
 * only plain SI values; the JSON tree is freed before fc_net_load returns. */
#ifndef FERROCIRC_NETWORK_H
#define FERROCIRC_NETWORK_H

#include <stddef.h>

#include "ferrocirc/error.h"
#include "ferrocirc/units.h"

typedef struct fc_net fc_net;

#define FC_NET_FORMAT "ferrocirc-network/1"
#define FC_NET_MAX_FILE_BYTES (40u * 1024u * 1024u) /* larger files are refused, not parsed */
#define FC_NET_MAX_ELEMENTS 1000000                 /* elements per network */

/* Load and validate a network file. `u` is borrowed and must outlive the network. On error
 * *out is NULL and err names the file, line/col where known, and the JSON path. */
int fc_net_load(const char *file, const fc_units *u, fc_net **out, fc_error *err);

/* The same from a buffer; `name` is used in messages, `basedir` resolves linked files. */
int fc_net_load_buffer(const char *buf, size_t len, const char *name, const char *basedir,
                       const fc_units *u, fc_net **out, fc_error *err);

void fc_net_free(fc_net *net);

const char *fc_net_title(const fc_net *net);
int fc_net_node_count(const fc_net *net);
const char *fc_net_node_name(const fc_net *net, int i);
int fc_net_elem_count(const fc_net *net);
const char *fc_net_elem_id(const fc_net *net, int i);
const char *fc_net_elem_type(const fc_net *net, int i);
/* Index of the node / element with that name, or -1. */
int fc_net_node_find(const fc_net *net, const char *name);
int fc_net_elem_find(const fc_net *net, const char *id);

/* Report units chosen in the file ("report"), defaults "mbar" and "uL/min". */
const char *fc_net_pressure_unit(const fc_net *net);
const char *fc_net_flow_unit(const fc_net *net);

#endif
