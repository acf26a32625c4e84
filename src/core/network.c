/*
 * network.c - a resistive network with sources reduced to its Thevenin or
 * Norton equivalent at two terminals, by modified nodal analysis (MNA).
 *
 * Unknowns: the voltage of every node but the negative terminal (the
 * reference), then the current through every voltage source from its FROM
 * node to its TO node.  Rows: Kirchhoff's current law at each node (sum of
 * currents leaving through parts = current driven in), then one constraint
 * V(to) - V(from) = E per voltage source.  Ho, Ruehli & Brennan, IEEE Trans.
 * Circuits Syst. 22(6), 1975.
 *
 * Such a system is regular exactly when the voltage sources form no loop
 * and the resistors and voltage sources (with the device, when it is part
 * of the question) join every node to the reference; network_check tests
 * both on the graph before any arithmetic, so the LU pivot threshold below
 * only catches values so extreme that rounding destroys the equations.
 */
#include "network.h"

#include <float.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/*
 * The network: nodes by name (with a hash index of the names: open
 * addressing, linear probing, at most half full; each slot holds a node
 * index + 1, 0 when empty), parts in the order given, the terminals.
 */
struct network {
	char **node_names;
	size_t nnodes, node_cap;
	size_t *node_index;
	size_t index_cap;       /* a power of two, or 0 */
	struct network_part *parts;
	size_t nparts, part_cap;
	bool has_terminals;
	size_t pos, neg;
};

/*
 * A pivot smaller than this times its column's largest original entry is
 * taken as zero: rounding has then erased the equation (common practice
 * for a rank test by Gaussian elimination).
 */
#define NETWORK_PIVOT_REL (1024.0 * DBL_EPSILON)

static const char *const kind_names[NETWORK_KIND_COUNT] = {
	"resistor", "voltage source", "current source",
};

static const char *const status_names[] = {
	[NETWORK_OK] = "ok",
	[NETWORK_NO_MEMORY] = "no memory",
	[NETWORK_EMPTY] = "empty",
	[NETWORK_BAD_TERMINALS] = "bad terminals",
	[NETWORK_BAD_VALUE] = "bad value",
	[NETWORK_SELF_LOOP] = "self loop",
	[NETWORK_DANGLING] = "dangling node",
	[NETWORK_NOT_CONNECTED] = "not connected",
	[NETWORK_VOLTAGE_LOOP] = "voltage-source loop",
	[NETWORK_CURRENT_CUT] = "current-source cut set",
	[NETWORK_SINGULAR] = "singular",
	[NETWORK_NOT_FINITE] = "not finite",
};

/* Name of kind K. */
const char *network_kind_name(enum network_kind k)
{
	return (unsigned)k < NETWORK_KIND_COUNT ? kind_names[k] : "?";
}

/* Short name of status ST. */
const char *network_status_name(enum network_status st)
{
	return (unsigned)st < sizeof status_names / sizeof status_names[0]
	       ? status_names[st] : "?";
}

/* A heap copy of S, or NULL. */
static char *network_strdup(const char *s)
{
	size_t n = strlen(s) + 1;
	char *d = malloc(n);
	if (d != NULL)
		memcpy(d, s, n);
	return d;
}

static int network_index_grow(struct network *net);

/* Allocate an empty network. */
struct network *network_create(void)
{
	return calloc(1, sizeof(struct network));
}

/* Free NET. */
void network_destroy(struct network *net)
{
	if (net == NULL)
		return;
	for (size_t k = 0; k < net->nnodes; k++)
		free(net->node_names[k]);
	for (size_t k = 0; k < net->nparts; k++)
		free(net->parts[k].name);
	free(net->node_names);
	free(net->node_index);
	free(net->parts);
	free(net);
}

/* A deep copy of NET. */
struct network *network_copy(const struct network *net)
{
	struct network *c = network_create();
	if (c == NULL)
		return NULL;
	c->has_terminals = net->has_terminals;
	c->pos = net->pos;
	c->neg = net->neg;
	if (net->nnodes > 0) {
		c->node_names = calloc(net->nnodes, sizeof(char *));
		if (c->node_names == NULL)
			goto fail;
		c->node_cap = net->nnodes;
		for (size_t k = 0; k < net->nnodes; k++) {
			c->node_names[k] = network_strdup(net->node_names[k]);
			if (c->node_names[k] == NULL)
				goto fail;
			c->nnodes = k + 1;
		}
	}
	if (net->nparts > 0) {
		c->parts = calloc(net->nparts, sizeof(struct network_part));
		if (c->parts == NULL)
			goto fail;
		c->part_cap = net->nparts;
		for (size_t k = 0; k < net->nparts; k++) {
			c->parts[k] = net->parts[k];
			c->parts[k].name = network_strdup(net->parts[k].name);
			if (c->parts[k].name == NULL)
				goto fail;
			c->nparts = k + 1;
		}
	}
	if (c->nnodes > 0 && network_index_grow(c) != 0)
		goto fail;
	return c;
fail:
	network_destroy(c);
	return NULL;
}

/* FNV-1a of NAME (Fowler, Noll & Vo; common practice for short keys). */
static uint64_t network_hash(const char *name)
{
	uint64_t h = UINT64_C(0xcbf29ce484222325);
	for (const unsigned char *p = (const unsigned char *)name; *p; p++) {
		h ^= *p;
		h *= UINT64_C(0x100000001b3);
	}
	return h;
}

/* Put node K into NET's index (which has room). */
static void network_index_put(struct network *net, size_t k)
{
	size_t mask = net->index_cap - 1;
	size_t at = (size_t)network_hash(net->node_names[k]) & mask;
	while (net->node_index[at] != 0)
		at = (at + 1) & mask;
	net->node_index[at] = k + 1;
}

/* Rebuild the index with room for at least 2 (nodes + 1); 0 or -1. */
static int network_index_grow(struct network *net)
{
	size_t cap = net->index_cap ? net->index_cap : 16;
	while (cap < 2 * (net->nnodes + 1))
		cap *= 2;
	size_t *idx = calloc(cap, sizeof *idx);
	if (idx == NULL)
		return -1;
	free(net->node_index);
	net->node_index = idx;
	net->index_cap = cap;
	for (size_t k = 0; k < net->nnodes; k++)
		network_index_put(net, k);
	return 0;
}

/* Index of the node called NAME, or -1. */
long network_find_node(const struct network *net, const char *name)
{
	if (net->index_cap == 0)
		return -1;
	size_t mask = net->index_cap - 1;
	for (size_t at = (size_t)network_hash(name) & mask;
	     net->node_index[at] != 0; at = (at + 1) & mask) {
		size_t k = net->node_index[at] - 1;
		if (strcmp(net->node_names[k], name) == 0)
			return (long)k;
	}
	return -1;
}

/* Index of the node called NAME, added when new. */
int network_node(struct network *net, const char *name, size_t *idx)
{
	long found = network_find_node(net, name);
	if (found >= 0) {
		*idx = (size_t)found;
		return 0;
	}
	if (net->nnodes == net->node_cap) {
		size_t cap = net->node_cap ? 2 * net->node_cap : 8;
		char **p = realloc(net->node_names, cap * sizeof(char *));
		if (p == NULL)
			return -1;
		net->node_names = p;
		net->node_cap = cap;
	}
	if (2 * (net->nnodes + 1) > net->index_cap &&
	    network_index_grow(net) != 0)
		return -1;
	char *copy = network_strdup(name);
	if (copy == NULL)
		return -1;
	net->node_names[net->nnodes] = copy;
	*idx = net->nnodes++;
	network_index_put(net, *idx);
	return 0;
}

/* Number of nodes. */
size_t network_node_count(const struct network *net)
{
	return net->nnodes;
}

/* Name of node IDX. */
const char *network_node_name(const struct network *net, size_t idx)
{
	return idx < net->nnodes ? net->node_names[idx] : NULL;
}

/* Append a part. */
long network_add_part(struct network *net, const char *name,
                      enum network_kind kind, double value,
                      const char *from, const char *to)
{
	if ((unsigned)kind >= NETWORK_KIND_COUNT || net->nparts >= LONG_MAX)
		return -1;
	size_t a, b;
	if (network_node(net, from, &a) != 0 || network_node(net, to, &b) != 0)
		return -1;
	if (net->nparts == net->part_cap) {
		size_t cap = net->part_cap ? 2 * net->part_cap : 8;
		struct network_part *p = realloc(net->parts, cap * sizeof *p);
		if (p == NULL)
			return -1;
		net->parts = p;
		net->part_cap = cap;
	}
	char *copy = network_strdup(name);
	if (copy == NULL)
		return -1;
	net->parts[net->nparts] = (struct network_part){
		.kind = kind, .value = value, .from = a, .to = b, .name = copy,
	};
	return (long)net->nparts++;
}

/* Number of parts. */
size_t network_part_count(const struct network *net)
{
	return net->nparts;
}

/* Part K. */
const struct network_part *network_part(const struct network *net, size_t k)
{
	return k < net->nparts ? &net->parts[k] : NULL;
}

/* Index of the first part called NAME, or -1. */
long network_find_part(const struct network *net, const char *name)
{
	for (size_t k = 0; k < net->nparts; k++)
		if (strcmp(net->parts[k].name, name) == 0)
			return (long)k;
	return -1;
}

/* Change part K's value. */
int network_set_value(struct network *net, size_t k, double value)
{
	if (k >= net->nparts)
		return -1;
	net->parts[k].value = value;
	return 0;
}

/* Set the device's terminals. */
int network_set_terminals(struct network *net, const char *positive,
                          const char *negative)
{
	size_t a, b;
	if (network_node(net, positive, &a) != 0 ||
	    network_node(net, negative, &b) != 0)
		return -1;
	net->pos = a;
	net->neg = b;
	net->has_terminals = true;
	return 0;
}

/* The terminal nodes. */
int network_terminals(const struct network *net, size_t *pos, size_t *neg)
{
	if (!net->has_terminals)
		return -1;
	*pos = net->pos;
	*neg = net->neg;
	return 0;
}

#if defined(__GNUC__)
__attribute__((format(printf, 5, 6)))
#endif
/* Record status ST at PART and NODE in DIAG with a formatted message. */
static enum network_status network_fail(struct network_diag *diag,
                                        enum network_status st, long part,
                                        long node, const char *fmt, ...)
{
	if (diag == NULL)
		return st;
	diag->status = st;
	diag->part = part;
	diag->node = node;
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(diag->message, sizeof diag->message, fmt, ap);
	va_end(ap);
	return st;
}

/* Mark DIAG as OK. */
static enum network_status network_ok(struct network_diag *diag)
{
	if (diag != NULL) {
		diag->status = NETWORK_OK;
		diag->part = -1;
		diag->node = -1;
		diag->message[0] = '\0';
	}
	return NETWORK_OK;
}

/* Root of X in the union-find forest UF (with path halving). */
static size_t uf_find(size_t *uf, size_t x)
{
	while (uf[x] != x) {
		uf[x] = uf[uf[x]];
		x = uf[x];
	}
	return x;
}

/* Join the sets of A and B; returns false when they were already one. */
static bool uf_join(size_t *uf, size_t a, size_t b)
{
	a = uf_find(uf, a);
	b = uf_find(uf, b);
	if (a == b)
		return false;
	uf[a] = b;
	return true;
}

/* Reset UF to N singletons. */
static void uf_reset(size_t *uf, size_t n)
{
	for (size_t k = 0; k < n; k++)
		uf[k] = k;
}

/*
 * Join in UF every part whose kind is in the mask KINDS (bit 1 << kind),
 * and the terminals when WITH_DEVICE.
 */
static void uf_join_kinds(const struct network *net, size_t *uf,
                          unsigned kinds, bool with_device)
{
	uf_reset(uf, net->nnodes);
	for (size_t k = 0; k < net->nparts; k++)
		if (kinds & (1u << net->parts[k].kind))
			uf_join(uf, net->parts[k].from, net->parts[k].to);
	if (with_device)
		uf_join(uf, net->pos, net->neg);
}

#define KIND_BIT(k) (1u << (k))

/* Check the values and ends of every part, in order. */
static enum network_status network_check_parts(const struct network *net,
                                               struct network_diag *diag)
{
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		const char *kn = network_kind_name(p->kind);
		if (!isfinite(p->value))
			return network_fail(diag, NETWORK_BAD_VALUE, (long)k, -1,
			                    "%s '%s': the value must be a finite number",
			                    kn, p->name);
		if (p->kind == NETWORK_RESISTOR && !(p->value > 0.0))
			return network_fail(diag, NETWORK_BAD_VALUE, (long)k, -1,
			                    "%s '%s': the resistance must be > 0 "
			                    "(a negative or zero resistance is not "
			                    "a passive part; join the nodes into one "
			                    "for a wire)", kn, p->name);
		if (p->from == p->to)
			return network_fail(diag, NETWORK_SELF_LOOP, (long)k,
			                    (long)p->from,
			                    "%s '%s' joins node '%s' to itself",
			                    kn, p->name, net->node_names[p->from]);
	}
	return NETWORK_OK;
}

/* Check the terminals and that no node dangles; DEG is scratch of nnodes. */
static enum network_status network_check_ends(const struct network *net,
                                              size_t *deg,
                                              struct network_diag *diag)
{
	if (!net->has_terminals)
		return network_fail(diag, NETWORK_BAD_TERMINALS, -1, -1,
		                    "the device's terminals are not given");
	if (net->pos == net->neg)
		return network_fail(diag, NETWORK_BAD_TERMINALS, -1, (long)net->pos,
		                    "the device's terminals are the same node '%s'",
		                    net->node_names[net->pos]);
	memset(deg, 0, net->nnodes * sizeof *deg);
	for (size_t k = 0; k < net->nparts; k++) {
		deg[net->parts[k].from]++;
		deg[net->parts[k].to]++;
	}
	const size_t term[2] = { net->pos, net->neg };
	for (int t = 0; t < 2; t++)
		if (deg[term[t]] == 0)
			return network_fail(diag, NETWORK_BAD_TERMINALS, -1,
			                    (long)term[t],
			                    "the device's %s terminal '%s' is joined "
			                    "to no part", t == 0 ? "positive" : "negative",
			                    net->node_names[term[t]]);
	deg[net->pos]++;
	deg[net->neg]++;
	for (size_t n = 0; n < net->nnodes; n++) {
		if (deg[n] == 0)
			return network_fail(diag, NETWORK_DANGLING, -1, (long)n,
			                    "node '%s' is joined to nothing",
			                    net->node_names[n]);
		if (deg[n] != 1)
			continue;
		for (size_t k = 0; k < net->nparts; k++) {
			const struct network_part *p = &net->parts[k];
			if (p->from == n || p->to == n)
				return network_fail(diag, NETWORK_DANGLING, (long)k,
				                    (long)n,
				                    "node '%s' is reached only by %s '%s' "
				                    "(is the node name misspelt?)",
				                    net->node_names[n],
				                    network_kind_name(p->kind), p->name);
		}
	}
	return NETWORK_OK;
}

/* Check connection, voltage-source loops and current-source cut sets. */
static enum network_status network_check_graph(const struct network *net,
                                               size_t *uf,
                                               struct network_diag *diag)
{
	const unsigned all = KIND_BIT(NETWORK_RESISTOR) |
	                     KIND_BIT(NETWORK_VOLTAGE_SOURCE) |
	                     KIND_BIT(NETWORK_CURRENT_SOURCE);
	uf_join_kinds(net, uf, all, false);
	if (uf_find(uf, net->pos) != uf_find(uf, net->neg))
		return network_fail(diag, NETWORK_NOT_CONNECTED, -1, (long)net->neg,
		                    "no chain of parts joins the device's terminals "
		                    "'%s' and '%s'", net->node_names[net->pos],
		                    net->node_names[net->neg]);
	size_t root = uf_find(uf, net->pos);
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		if (uf_find(uf, p->from) != root)
			return network_fail(diag, NETWORK_NOT_CONNECTED, (long)k,
			                    (long)p->from,
			                    "%s '%s' is not connected to the device's "
			                    "terminals", network_kind_name(p->kind),
			                    p->name);
	}

	uf_reset(uf, net->nnodes);
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		if (p->kind != NETWORK_VOLTAGE_SOURCE)
			continue;
		if (!uf_join(uf, p->from, p->to))
			return network_fail(diag, NETWORK_VOLTAGE_LOOP, (long)k,
			                    (long)p->from,
			                    "voltage source '%s' closes a loop of "
			                    "voltage sources: their voltages fight "
			                    "and their currents are undefined (add a "
			                    "resistor in the loop)", p->name);
	}

	uf_join_kinds(net, uf, KIND_BIT(NETWORK_RESISTOR) |
	              KIND_BIT(NETWORK_VOLTAGE_SOURCE), true);
	size_t ref = uf_find(uf, net->neg);
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		if (p->kind != NETWORK_CURRENT_SOURCE)
			continue;
		size_t end = uf_find(uf, p->from) != ref ? p->from
		             : uf_find(uf, p->to) != ref ? p->to : SIZE_MAX;
		if (end != SIZE_MAX)
			return network_fail(diag, NETWORK_CURRENT_CUT, (long)k,
			                    (long)end,
			                    "node '%s' is reached only through current "
			                    "sources (such as '%s'): its voltage is "
			                    "undefined (add a resistor from it to the "
			                    "rest of the network)",
			                    net->node_names[end], p->name);
	}
	return NETWORK_OK;
}

/* Check NET structurally. */
enum network_status network_check(const struct network *net,
                                  struct network_diag *diag)
{
	if (net->nparts == 0)
		return network_fail(diag, NETWORK_EMPTY, -1, -1,
		                    "the network has no parts");
	enum network_status st = network_check_parts(net, diag);
	if (st != NETWORK_OK)
		return st;
	size_t *scratch = malloc(net->nnodes * sizeof *scratch);
	if (scratch == NULL)
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	st = network_check_ends(net, scratch, diag);
	if (st == NETWORK_OK)
		st = network_check_graph(net, scratch, diag);
	free(scratch);
	return st == NETWORK_OK ? network_ok(diag) : st;
}

/* A dense MNA system: the matrix, its LU factors and the row map. */
struct mna {
	size_t n;          /* unknowns */
	size_t nvs;        /* voltage sources (including an imposed device) */
	double *a;         /* n x n, row-major; LU factors after mna_factor */
	size_t *perm;      /* row permutation of the factorisation */
	long *row;         /* node -> unknown index, -1 for the reference */
	size_t *vs_part;   /* voltage-source unknown k -> part index */
	bool device_vs;    /* the last voltage source is the imposed device */
};

/* Free what M owns. */
static void mna_fini(struct mna *m)
{
	free(m->a);
	free(m->perm);
	free(m->row);
	free(m->vs_part);
}

/* Add X to entry (R, C) when both are unknowns. */
static void mna_add(struct mna *m, long r, long c, double x)
{
	if (r >= 0 && c >= 0)
		m->a[(size_t)r * m->n + (size_t)c] += x;
}

/*
 * Build the MNA matrix of NET with the negative terminal as reference;
 * with DEVICE_VS the device is an extra voltage source from the negative
 * to the positive terminal.  Returns 0 or -1 on no memory.
 */
static int mna_build(struct mna *m, const struct network *net, bool device_vs)
{
	memset(m, 0, sizeof *m);
	size_t nvs = device_vs ? 1 : 0;
	for (size_t k = 0; k < net->nparts; k++)
		if (net->parts[k].kind == NETWORK_VOLTAGE_SOURCE)
			nvs++;
	m->nvs = nvs;
	m->device_vs = device_vs;
	m->n = net->nnodes - 1 + nvs;
	m->row = malloc(net->nnodes * sizeof *m->row);
	m->vs_part = malloc((nvs ? nvs : 1) * sizeof *m->vs_part);
	m->perm = malloc(m->n * sizeof *m->perm);
	m->a = calloc(m->n * m->n, sizeof *m->a);
	if (m->row == NULL || m->vs_part == NULL || m->perm == NULL ||
	    m->a == NULL) {
		mna_fini(m);
		return -1;
	}
	long next = 0;
	for (size_t k = 0; k < net->nnodes; k++)
		m->row[k] = k == net->neg ? -1 : next++;
	size_t vs = 0;
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		long a = m->row[p->from], b = m->row[p->to];
		if (p->kind == NETWORK_RESISTOR) {
			double g = 1.0 / p->value;
			mna_add(m, a, a, g);
			mna_add(m, b, b, g);
			mna_add(m, a, b, -g);
			mna_add(m, b, a, -g);
		} else if (p->kind == NETWORK_VOLTAGE_SOURCE) {
			long j = next + (long)vs;
			m->vs_part[vs++] = k;
			mna_add(m, a, j, 1.0);
			mna_add(m, b, j, -1.0);
			mna_add(m, j, a, -1.0);
			mna_add(m, j, b, 1.0);
		}
	}
	if (device_vs) {
		long j = next + (long)vs;
		m->vs_part[vs] = SIZE_MAX;
		long a = m->row[net->neg], b = m->row[net->pos];
		mna_add(m, a, j, 1.0);
		mna_add(m, b, j, -1.0);
		mna_add(m, j, a, -1.0);
		mna_add(m, j, b, 1.0);
	}
	return 0;
}

/*
 * Factor M's matrix in place as P A = L U (Doolittle, partial pivoting).
 * Returns 0, or -1 when a pivot falls below NETWORK_PIVOT_REL times its
 * column's largest original entry.
 */
static int mna_factor(struct mna *m)
{
	size_t n = m->n;
	double *a = m->a;
	double *colmax = calloc(n ? n : 1, sizeof *colmax);
	if (colmax == NULL)
		return -2;
	for (size_t r = 0; r < n; r++)
		for (size_t c = 0; c < n; c++)
			if (fabs(a[r * n + c]) > colmax[c])
				colmax[c] = fabs(a[r * n + c]);
	for (size_t k = 0; k < n; k++)
		m->perm[k] = k;
	int rc = 0;
	for (size_t k = 0; k < n; k++) {
		size_t piv = k;
		double best = fabs(a[k * n + k]);
		for (size_t r = k + 1; r < n; r++)
			if (fabs(a[r * n + k]) > best) {
				best = fabs(a[r * n + k]);
				piv = r;
			}
		if (!(best > NETWORK_PIVOT_REL * colmax[k])) {
			rc = -1;
			break;
		}
		if (piv != k) {
			for (size_t c = 0; c < n; c++) {
				double t = a[k * n + c];
				a[k * n + c] = a[piv * n + c];
				a[piv * n + c] = t;
			}
			size_t t = m->perm[k];
			m->perm[k] = m->perm[piv];
			m->perm[piv] = t;
		}
		double d = a[k * n + k];
		for (size_t r = k + 1; r < n; r++) {
			double f = a[r * n + k] / d;
			a[r * n + k] = f;
			if (f == 0.0)
				continue;
			for (size_t c = k + 1; c < n; c++)
				a[r * n + c] -= f * a[k * n + c];
		}
	}
	free(colmax);
	return rc;
}

/* Solve the factored system for right-hand side B into X (distinct). */
static void mna_solve(const struct mna *m, const double *b, double *x)
{
	size_t n = m->n;
	const double *a = m->a;
	for (size_t r = 0; r < n; r++) {
		double s = b[m->perm[r]];
		for (size_t c = 0; c < r; c++)
			s -= a[r * n + c] * x[c];
		x[r] = s;
	}
	for (size_t r = n; r-- > 0;) {
		double s = x[r];
		for (size_t c = r + 1; c < n; c++)
			s -= a[r * n + c] * x[c];
		x[r] = s / a[r * n + r];
	}
}

/*
 * The right-hand side: the sources scaled by SOURCES (0 or 1), INJECT
 * amperes driven into the positive terminal, and DEVICE_V for an imposed
 * device voltage source.
 */
static void mna_rhs(const struct mna *m, const struct network *net,
                    double sources, double inject, double device_v, double *b)
{
	memset(b, 0, m->n * sizeof *b);
	size_t base = net->nnodes - 1;
	size_t vs = 0;
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		long a = m->row[p->from], c = m->row[p->to];
		if (p->kind == NETWORK_CURRENT_SOURCE) {
			if (a >= 0)
				b[a] -= sources * p->value;
			if (c >= 0)
				b[c] += sources * p->value;
		} else if (p->kind == NETWORK_VOLTAGE_SOURCE) {
			b[base + vs++] = sources * p->value;
		}
	}
	if (m->device_vs)
		b[base + vs] = device_v;
	if (m->row[net->pos] >= 0)
		b[m->row[net->pos]] += inject;
}

/* Build and factor the MNA system of NET, mapping failures to a status. */
static enum network_status network_mna(const struct network *net,
                                       bool device_vs, struct mna *m,
                                       struct network_diag *diag)
{
	if (mna_build(m, net, device_vs) != 0)
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	int rc = mna_factor(m);
	if (rc == 0)
		return NETWORK_OK;
	mna_fini(m);
	if (rc == -2)
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	return network_fail(diag, NETWORK_SINGULAR, -1, -1,
	                    "the network equations are singular to working "
	                    "precision (part values span too many decades?)");
}

/* Reduce NET to its equivalent at the terminals. */
enum network_status network_reduce(const struct network *net,
                                   struct network_thevenin *th,
                                   struct source_spec *spec,
                                   struct network_diag *diag)
{
	enum network_status st = network_check(net, diag);
	if (st != NETWORK_OK)
		return st;
	size_t *uf = malloc(net->nnodes * sizeof *uf);
	if (uf == NULL)
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	struct network_thevenin r = { NAN, NAN, NAN };

	uf_join_kinds(net, uf, KIND_BIT(NETWORK_RESISTOR) |
	              KIND_BIT(NETWORK_VOLTAGE_SOURCE), false);
	size_t cpos = uf_find(uf, net->pos);
	if (cpos != uf_find(uf, net->neg)) {
		/*
		 * Only current sources (and the device) leave the group of
		 * nodes around the positive terminal: by KCL over that cut the
		 * device current is their net current into the group, whatever
		 * the voltage.
		 */
		double isc = 0.0;
		for (size_t k = 0; k < net->nparts; k++) {
			const struct network_part *p = &net->parts[k];
			if (p->kind != NETWORK_CURRENT_SOURCE)
				continue;
			bool in_from = uf_find(uf, p->from) == cpos;
			bool in_to = uf_find(uf, p->to) == cpos;
			if (in_to && !in_from)
				isc += p->value;
			else if (in_from && !in_to)
				isc -= p->value;
		}
		free(uf);
		r.isc = isc;
		r.rth = INFINITY;
		if (!isfinite(isc))
			return network_fail(diag, NETWORK_NOT_FINITE, -1, -1,
			                    "the short-circuit current overflows");
		if (th != NULL)
			*th = r;
		if (spec != NULL)
			source_spec_norton(spec, isc, INFINITY);
		return network_ok(diag);
	}

	uf_join_kinds(net, uf, KIND_BIT(NETWORK_VOLTAGE_SOURCE), false);
	bool stiff = uf_find(uf, net->pos) == uf_find(uf, net->neg);
	free(uf);

	struct mna m;
	st = network_mna(net, false, &m, diag);
	if (st != NETWORK_OK)
		return st;
	double *b = malloc(2 * m.n * sizeof *b);
	if (b == NULL) {
		mna_fini(&m);
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	}
	double *x = b + m.n;
	long prow = m.row[net->pos];
	mna_rhs(&m, net, 1.0, 0.0, 0.0, b);
	mna_solve(&m, b, x);
	r.voc = x[prow];
	if (stiff) {
		r.rth = 0.0;
	} else {
		mna_rhs(&m, net, 0.0, 1.0, 0.0, b);
		mna_solve(&m, b, x);
		r.rth = x[prow] > 0.0 ? x[prow] : 0.0;
	}
	free(b);
	mna_fini(&m);
	if (!isfinite(r.voc) || !isfinite(r.rth))
		return network_fail(diag, NETWORK_NOT_FINITE, -1, -1,
		                    "the open-circuit voltage or the source "
		                    "resistance overflows");
	r.isc = r.rth > 0.0 ? r.voc / r.rth : NAN;
	if (th != NULL)
		*th = r;
	if (spec != NULL)
		source_spec_thevenin(spec, r.voc, r.rth);
	return network_ok(diag);
}

/* Node voltages and part states at the operating point (V, I). */
enum network_status network_solve_at(const struct network *net, double v,
                                     double i, size_t ref, double *node_v,
                                     struct network_part_state *parts,
                                     struct network_diag *diag)
{
	enum network_status st = network_check(net, diag);
	if (st != NETWORK_OK)
		return st;
	if (ref >= net->nnodes)
		return network_fail(diag, NETWORK_BAD_TERMINALS, -1, -1,
		                    "the reference node is not in the network");
	if (!isfinite(v) || !isfinite(i))
		return network_fail(diag, NETWORK_BAD_VALUE, -1, -1,
		                    "the operating point is not finite");
	size_t *uf = malloc(net->nnodes * sizeof *uf);
	if (uf == NULL)
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	uf_join_kinds(net, uf, KIND_BIT(NETWORK_RESISTOR) |
	              KIND_BIT(NETWORK_VOLTAGE_SOURCE), false);
	bool impose_v = uf_find(uf, net->pos) != uf_find(uf, net->neg);
	free(uf);

	struct mna m;
	st = network_mna(net, impose_v, &m, diag);
	if (st != NETWORK_OK)
		return st;
	double *b = malloc(2 * m.n * sizeof *b);
	if (b == NULL) {
		mna_fini(&m);
		return network_fail(diag, NETWORK_NO_MEMORY, -1, -1, "out of memory");
	}
	double *x = b + m.n;
	mna_rhs(&m, net, 1.0, impose_v ? 0.0 : -i, v, b);
	mna_solve(&m, b, x);
	for (size_t k = 0; k < net->nnodes; k++)
		node_v[k] = m.row[k] < 0 ? 0.0 : x[m.row[k]];
	double shift = node_v[ref];
	for (size_t k = 0; k < net->nnodes; k++)
		node_v[k] -= shift;

	bool finite = true;
	size_t base = net->nnodes - 1, vs = 0;
	for (size_t k = 0; k < net->nparts; k++) {
		const struct network_part *p = &net->parts[k];
		double u = node_v[p->from] - node_v[p->to];
		double c;
		if (p->kind == NETWORK_RESISTOR)
			c = u / p->value;
		else if (p->kind == NETWORK_VOLTAGE_SOURCE)
			c = x[base + vs++];
		else
			c = p->value;
		if (parts != NULL)
			parts[k] = (struct network_part_state){ u, c, u * c };
		finite = finite && isfinite(u) && isfinite(c) && isfinite(u * c);
	}
	for (size_t k = 0; k < net->nnodes; k++)
		finite = finite && isfinite(node_v[k]);
	free(b);
	mna_fini(&m);
	if (!finite)
		return network_fail(diag, NETWORK_NOT_FINITE, -1, -1,
		                    "a node voltage or part current overflows");
	return network_ok(diag);
}
