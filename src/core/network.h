/*
 * network.h - a resistive network with independent sources, reduced to the
 * two-terminal source the solver works on (source.h).
 *
 * A network is a set of named nodes and parts.  Each part is a resistor, a
 * voltage source or a current source with one value and two nodes, FROM
 * and TO, in a stated direction:
 *
 *     resistor        value in ohm (> 0); its voltage is V(from) - V(to)
 *                     and its current flows from FROM to TO through it.
 *     voltage source  value in volts: V(to) - V(from) = value, so TO is the
 *                     positive terminal (the source raises the potential
 *                     going from FROM to TO).
 *     current source  value in amperes, pushed through the source from FROM
 *                     to TO: it draws the current out of FROM and delivers
 *                     it into TO.
 *
 * The device connects between two terminal nodes: its positive terminal
 * (the device voltage V is V(positive) - V(negative)) and its negative
 * terminal; the device current I flows out of the network at the positive
 * terminal, through the device, and back in at the negative one.
 *
 * The reduction uses modified nodal analysis (Ho, Ruehli & Brennan, IEEE
 * Trans. Circuits Syst. 22(6), 1975) with the negative terminal as the
 * reference node, solved by a dense LU factorisation with partial pivoting:
 *
 *     open-circuit voltage  Voc = V(positive) with no device
 *     source resistance     Rth = V(positive) with every source zeroed and
 *                           1 A driven into the positive terminal
 *
 * When the positive terminal is joined to the rest of the network only
 * through current sources, Rth is infinite and the result is a Norton
 * source with rp = INFINITY whose current is the net current those sources
 * deliver across the cut (Kirchhoff's current law).  When a chain of
 * voltage sources joins the terminals, Rth is exactly 0.
 *
 * Before any arithmetic the network is checked structurally (union-find),
 * so an error names the part or node at fault: a bad value, a part joining
 * a node to itself, a dangling node, a loop of voltage sources, a group of
 * nodes reached only through current sources, parts not connected to the
 * terminals.  A pivot threshold in the factorisation is the last resort.
 *
 * Ownership: a network is a heap object (network_create/network_destroy);
 * it copies every name it is given.  The reduction allocates its working
 * matrices and frees them before it returns.
 */
#ifndef BIASLINE_NETWORK_H
#define BIASLINE_NETWORK_H

#include <stdbool.h>
#include <stddef.h>

#include "source.h"

/* The kinds of part. */
enum network_kind {
	NETWORK_RESISTOR,        /* value in ohm */
	NETWORK_VOLTAGE_SOURCE,  /* value in volts, TO is + */
	NETWORK_CURRENT_SOURCE,  /* value in amperes, FROM -> TO */
	NETWORK_KIND_COUNT
};

/* One part: its kind, value and the two nodes it joins, FROM then TO. */
struct network_part {
	enum network_kind kind;
	double value;
	size_t from, to;   /* node indices */
	char *name;        /* owned by the network; never NULL */
};

/* Why a network cannot be reduced (or NETWORK_OK). */
enum network_status {
	NETWORK_OK = 0,
	NETWORK_NO_MEMORY,       /* an allocation failed */
	NETWORK_EMPTY,           /* no parts */
	NETWORK_BAD_TERMINALS,   /* terminals unset, the same node, or unused */
	NETWORK_BAD_VALUE,       /* non-finite value, or a resistance <= 0 */
	NETWORK_SELF_LOOP,       /* a part joins a node to itself */
	NETWORK_DANGLING,        /* a node only one part end reaches */
	NETWORK_NOT_CONNECTED,   /* parts or a terminal cut off from the rest */
	NETWORK_VOLTAGE_LOOP,    /* voltage sources form a closed loop */
	NETWORK_CURRENT_CUT,     /* nodes reached only through current sources */
	NETWORK_SINGULAR,        /* a pivot below threshold (last resort) */
	NETWORK_NOT_FINITE,      /* the result overflowed */
};

/* What went wrong and where: the part and node at fault, when known. */
struct network_diag {
	enum network_status status;
	long part;           /* index of the offending part, or -1 */
	long node;           /* index of the offending node, or -1 */
	char message[320];   /* one line naming the part/nodes, "" when OK */
};

/* The reduction at the terminals. */
struct network_thevenin {
	double voc;          /* open-circuit voltage, V (NaN when rth is inf) */
	double rth;          /* source resistance, ohm, 0 <= rth <= INFINITY */
	double isc;          /* short-circuit current, A (NaN when rth == 0) */
};

/* Voltage, current and absorbed power of one part at an operating point. */
struct network_part_state {
	double voltage;      /* V(from) - V(to), V */
	double current;      /* through the part from FROM to TO, A */
	double power;        /* voltage * current: > 0 absorbed, < 0 delivered */
};

struct network;

/* Allocate an empty network; NULL on no memory.  Free with network_destroy. */
struct network *network_create(void);

/* Free NET (NULL is fine). */
void network_destroy(struct network *net);

/* A deep copy of NET, or NULL on no memory. */
struct network *network_copy(const struct network *net);

/* Name of kind K ("resistor", "voltage source", "current source"). */
const char *network_kind_name(enum network_kind k);

/* Short name of status ST, for messages and tests. */
const char *network_status_name(enum network_status st);

/*
 * Index of the node called NAME into *IDX, adding the node when it is new.
 * Returns 0, or -1 on no memory.
 */
int network_node(struct network *net, const char *name, size_t *idx);

/* Index of the node called NAME, or -1 when there is none. */
long network_find_node(const struct network *net, const char *name);

/* Number of nodes, and the name of node IDX (NULL when out of range). */
size_t network_node_count(const struct network *net);
const char *network_node_name(const struct network *net, size_t idx);

/*
 * Append a part called NAME of kind KIND with VALUE between the nodes
 * called FROM and TO (added when new).  Values are checked by
 * network_reduce, not here, so a file can be loaded whole and every
 * mistake reported with its place.  Returns the new part's index, or -1
 * on no memory or an unknown kind.
 */
long network_add_part(struct network *net, const char *name,
                      enum network_kind kind, double value,
                      const char *from, const char *to);

/* Number of parts, and part K (NULL when out of range). */
size_t network_part_count(const struct network *net);
const struct network_part *network_part(const struct network *net, size_t k);

/* Index of the first part called NAME, or -1 (for sweeps by name). */
long network_find_part(const struct network *net, const char *name);

/* Change part K's value (a sweep or tolerance step); 0, or -1 when K is bad. */
int network_set_value(struct network *net, size_t k, double value);

/*
 * Set the device's terminals: the nodes called POSITIVE and NEGATIVE
 * (added when new).  Returns 0, or -1 on no memory.
 */
int network_set_terminals(struct network *net, const char *positive,
                          const char *negative);

/* The terminal nodes into *POS and *NEG; returns -1 when they are unset. */
int network_terminals(const struct network *net, size_t *pos, size_t *neg);

/*
 * Check NET structurally (every rule at the top of this file, in a fixed
 * order: values, self loops, terminals, dangling nodes, connection,
 * voltage loops, current cut sets).  Returns NETWORK_OK, or the first
 * problem, described in DIAG (which may be NULL).
 */
enum network_status network_check(const struct network *net,
                                  struct network_diag *diag);

/*
 * Reduce NET to its equivalent at the terminals: *TH when TH is not NULL,
 * and *SPEC (when not NULL) as a Thevenin source (vs = Voc, rs = Rth,
 * including rs = 0), or as a Norton source with rp = INFINITY when Rth is
 * infinite.  Returns NETWORK_OK or a problem described in DIAG.
 */
enum network_status network_reduce(const struct network *net,
                                   struct network_thevenin *th,
                                   struct source_spec *spec,
                                   struct network_diag *diag);

/*
 * Every node voltage and part state with the device connected at the
 * operating point (V, I): V across the device, I through it (I leaves the
 * network at the positive terminal).  NODE_V (network_node_count entries)
 * gets each node's voltage relative to the node REF; PARTS (may be NULL;
 * network_part_count entries) each part's state.  The current I is driven
 * into the network when Rth is finite, the voltage V imposed when it is
 * infinite.  Returns NETWORK_OK or a problem described in DIAG.
 */
enum network_status network_solve_at(const struct network *net, double v,
                                     double i, size_t ref, double *node_v,
                                     struct network_part_state *parts,
                                     struct network_diag *diag);

#endif
