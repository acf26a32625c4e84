/*
 * section_network.h - the network form of the source in a session file:
 * a resistive network with sources (core/network.h) that the session
 * reduces to its Thevenin or Norton equivalent.
 *
 *   source:
 *     network:
 *       device_between: [base, ground]   # the device's + node, then - node
 *       parts:
 *         - name: upper divider
 *           resistor: 47k
 *           from: supply
 *           to: base
 *         - name: supply
 *           voltage_source: 12 V         # V(to) - V(from) = 12 V: `to` is +
 *           from: ground
 *           to: supply
 *         - name: bias trim
 *           current_source: 150 uA       # pushed from `from` to `to`
 *           from: ground
 *           to: base
 *
 * Every part has a unique name (no '.', at most SESSION_NETWORK_NAME_MAX
 * bytes), exactly one of resistor / voltage_source / current_source, and
 * the nodes `from` and `to`.  A part's value is addressed by the key path
 * "source.network.<part name>" (sweeps, tolerances, error messages).
 *
 * In a loaded session, s->network holds the network and s->source its
 * reduction, kept in step by session_network_set_value.
 */
#ifndef BIASLINE_SECTION_NETWORK_H
#define BIASLINE_SECTION_NETWORK_H

#include <stdbool.h>
#include <stddef.h>

#include "core/network.h"
#include "core/quantity.h"
#include "core/source.h"
#include "session/session.h"

/* Longest part name in bytes (keeps "source.network.<name>" in a key). */
#define SESSION_NETWORK_NAME_MAX 40

/* The key path prefix of part values: "source.network." */
#define SESSION_NETWORK_PREFIX "source.network."

/* The YAML key of part kind K ("resistor", "voltage_source", ...). */
const char *session_network_kind_key(enum network_kind k);

/* The unit of a part of kind K's value. */
enum qty_kind session_network_kind_unit(enum network_kind k);

/* True when A and B are the same network (NULL equals NULL), bit for bit. */
bool session_network_equal(const struct network *a, const struct network *b);

/*
 * Reduce NET into *SPEC.  Returns 0, or -1 with a message that starts with
 * the key path of the part at fault ("source.network.upper divider: ...").
 */
int session_network_spec(const struct network *net, struct source_spec *spec,
                         char *err, size_t errlen);

/*
 * The part that key path PATH ("source.network.<name>") addresses in S's
 * network, or -1 (no network, or no such part).
 */
long session_network_find(const struct session *s, const char *path);

/*
 * Set the value of the part at PATH to VALUE and reduce the network again
 * into s->source.  Returns 0, or -1 with a message (unknown path, or the
 * network cannot be reduced with that value: the old value is then kept).
 */
int session_network_set_value(struct session *s, const char *path,
                              double value, char *err, size_t errlen);

#endif
