/*
 * section_network.c - the network form of the source (see
 * section_network.h for the syntax): load it from the tree, reduce it with
 * core/network.c so the rest of the program sees an ordinary source, map
 * the reduction's errors back to the part's line, and write it back.
 *
 * The section's keys hold a list, so, like the device, it supplies its own
 * load and save; the key tables below still drive "did you mean" and the
 * duplicate-key checks in the same words as the generic walker.
 */
#include "session/section_network.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "session/section.h"
#include "session/ytree.h"

/* Most parts in one network: keeps the dense O(n^3) reduction instant. */
#define NETWORK_MAX_PARTS 256

/* Keys of the network mapping. */
enum { NET_BETWEEN, NET_PARTS, NET_NKEYS };
static const char *const net_keys[NET_NKEYS] = { "device_between", "parts" };

/* Keys of one part; the three kinds first, in enum network_kind order. */
enum { PART_RESISTOR, PART_VOLTAGE, PART_CURRENT, PART_NAME, PART_FROM,
       PART_TO, PART_NKEYS };
static const char *const part_keys[PART_NKEYS] = {
	"resistor", "voltage_source", "current_source", "name", "from", "to",
};

/* Valid range and noun of each kind's value. */
static const struct {
	enum qty_kind unit;
	double min, max;
	bool min_open;
} kind_range[NETWORK_KIND_COUNT] = {
	[NETWORK_RESISTOR] = { QTY_RESISTANCE, 0.0, 1e15, true },
	[NETWORK_VOLTAGE_SOURCE] = { QTY_VOLTAGE, -1e9, 1e9, false },
	[NETWORK_CURRENT_SOURCE] = { QTY_CURRENT, -1e6, 1e6, false },
};

/* The YAML key of part kind K. */
const char *session_network_kind_key(enum network_kind k)
{
	return (unsigned)k < NETWORK_KIND_COUNT ? part_keys[k] : "?";
}

/* The unit of a part of kind K's value. */
enum qty_kind session_network_kind_unit(enum network_kind k)
{
	return (unsigned)k < NETWORK_KIND_COUNT ? kind_range[k].unit : QTY_NUMBER;
}

/*
 * Walk mapping MAP's keys against the N names KEYS into VALS / KEYNODES
 * (by index): unknown keys get a suggestion, repeated keys an error.
 * WHERE names the mapping in messages.  Returns 0 or -1.
 */
static int network_walk(struct load_ctx *c, const struct ynode *map,
                        const char *path, const char *const *keys, size_t n,
                        const char *where, const struct ynode **vals,
                        const struct ynode **keynodes)
{
	char sub[SECTION_PATH_MAX];
	for (size_t j = 0; j < n; j++)
		vals[j] = keynodes[j] = NULL;
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k];
		char found[96];
		ytree_describe(kn, found, sizeof found);
		if (kn->type != YNODE_SCALAR || kn->len == 0) {
			ytree_error(c->err, c->name, kn, path,
			            "found %s as a key, expected a key name", found);
			return -1;
		}
		size_t j = 0;
		while (j < n && strcmp(keys[j], kn->text) != 0)
			j++;
		section_path(sub, sizeof sub, path, kn->text);
		if (j == n) {
			const char *near = section_suggest(kn->text, keys, n);
			char list[160] = "";
			size_t o = 0;
			for (size_t q = 0; q < n && o < sizeof list; q++)
				o += (size_t)snprintf(list + o, sizeof list - o, "%s%s",
				                      q ? ", " : "", keys[q]);
			if (near != NULL)
				ytree_error(c->err, c->name, kn, sub,
				            "unknown key %s in %s; did you mean '%s'?", found,
				            where, near);
			else
				ytree_error(c->err, c->name, kn, sub,
				            "unknown key %s in %s, expected one of: %s", found,
				            where, list);
			return -1;
		}
		if (keynodes[j] != NULL) {
			ytree_error(c->err, c->name, kn, sub,
			            "duplicate key (first given on line %u), expected "
			            "each key once", keynodes[j]->line);
			return -1;
		}
		keynodes[j] = kn;
		vals[j] = map->kids[k + 1];
	}
	return 0;
}

/* Check that V is a usable name (node or part); returns 0 or -1. */
static int network_need_name(struct load_ctx *c, const struct ynode *v,
                             const char *path, const char *what)
{
	if (section_need_scalar(c, v, path, what) != 0)
		return -1;
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (strlen(v->text) != v->len || v->len > SESSION_NETWORK_NAME_MAX) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected %s of at most %d bytes", found, what,
		            SESSION_NETWORK_NAME_MAX);
		return -1;
	}
	return 0;
}

/* Load device_between: a list of two node names, + then -. */
static int network_load_between(struct load_ctx *c, const struct ynode *v,
                                const char *path, struct network *net)
{
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (v->type != YNODE_SEQUENCE || v->nkids != 2) {
		if (v->type == YNODE_SEQUENCE)
			snprintf(found, sizeof found, "a list of %zu item%s", v->nkids,
			         v->nkids == 1 ? "" : "s");
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected [positive node, negative node]: the "
		            "nodes the device's + and - terminals join", found);
		return -1;
	}
	for (size_t k = 0; k < 2; k++)
		if (network_need_name(c, v->kids[k], path, "a node name") != 0)
			return -1;
	if (strcmp(v->kids[0]->text, v->kids[1]->text) == 0) {
		ytree_error(c->err, c->name, v->kids[1], path,
		            "found the node '%s' twice, expected two different nodes",
		            v->kids[1]->text);
		return -1;
	}
	if (network_set_terminals(net, v->kids[0]->text, v->kids[1]->text) != 0) {
		ytree_error(c->err, c->name, v, path, "out of memory");
		return -1;
	}
	return 0;
}

/*
 * Load one part (mapping P, item K of the list at PATH) into NET; NETPATH
 * is the network's own path, under which the part's value is addressed.
 */
static int network_load_part(struct load_ctx *c, const struct ynode *p,
                             size_t k, const char *path, const char *netpath,
                             struct network *net)
{
	char sub[SECTION_PATH_MAX + 24], where[48];
	if (snprintf(sub, sizeof sub, "%s[%zu]", path, k) >= (int)sizeof sub)
		sub[sizeof sub - 1] = '\0';
	snprintf(where, sizeof where, "part %zu of the network", k + 1);
	if (p->type != YNODE_MAPPING) {
		char found[96];
		ytree_describe(p, found, sizeof found);
		ytree_error(c->err, c->name, p, sub,
		            "found %s, expected a part: a mapping with name, one of "
		            "resistor / voltage_source / current_source, from and to",
		            found);
		return -1;
	}
	const struct ynode *val[PART_NKEYS], *key[PART_NKEYS];
	if (network_walk(c, p, sub, part_keys, PART_NKEYS, where, val, key) != 0)
		return -1;
	if (val[PART_NAME] == NULL) {
		ytree_error(c->err, c->name, p, sub,
		            "missing required key 'name' in %s (a name of your own, "
		            "unique in the network)", where);
		return -1;
	}
	if (network_need_name(c, val[PART_NAME], sub, "a part name") != 0)
		return -1;
	const char *name = val[PART_NAME]->text;
	if (strchr(name, '.') != NULL) {
		ytree_error(c->err, c->name, val[PART_NAME], sub,
		            "found the name '%s', expected a name without '.' (a "
		            "part's value is addressed as source.network.NAME)", name);
		return -1;
	}
	long dup = network_find_part(net, name);
	if (dup >= 0) {
		ytree_error(c->err, c->name, val[PART_NAME], sub,
		            "found the name '%s' again (part %ld), expected each "
		            "part's name once", name, dup + 1);
		return -1;
	}
	section_path(sub, sizeof sub, netpath, name);

	int kind = -1;
	for (int q = 0; q < NETWORK_KIND_COUNT; q++) {
		if (key[q] == NULL)
			continue;
		if (kind >= 0) {
			ytree_error(c->err, c->name, key[q], sub,
			            "found both '%s' (line %u) and '%s', expected one kind "
			            "per part", part_keys[kind], key[kind]->line,
			            part_keys[q]);
			return -1;
		}
		kind = q;
	}
	if (kind < 0) {
		ytree_error(c->err, c->name, p, sub,
		            "missing the kind of part '%s': expected one of "
		            "resistor, voltage_source, current_source with its value",
		            name);
		return -1;
	}
	double value;
	if (section_parse_qty(c, val[kind], sub, kind_range[kind].unit,
	                      kind_range[kind].min, kind_range[kind].max,
	                      kind_range[kind].min_open, false, &value) != 0)
		return -1;
	static const int ends[2] = { PART_FROM, PART_TO };
	for (size_t e = 0; e < 2; e++) {
		if (val[ends[e]] == NULL) {
			ytree_error(c->err, c->name, p, sub,
			            "missing required key '%s' in part '%s' (the node %s)",
			            part_keys[ends[e]], name,
			            e == 0 ? "the part starts from" : "the part goes to");
			return -1;
		}
		if (network_need_name(c, val[ends[e]], sub, "a node name") != 0)
			return -1;
	}
	if (strcmp(val[PART_FROM]->text, val[PART_TO]->text) == 0) {
		ytree_error(c->err, c->name, val[PART_TO], sub,
		            "found from and to both '%s', expected two different "
		            "nodes (a part joining a node to itself does nothing)",
		            val[PART_TO]->text);
		return -1;
	}
	if (network_add_part(net, name, (enum network_kind)kind, value,
	                     val[PART_FROM]->text, val[PART_TO]->text) < 0) {
		ytree_error(c->err, c->name, p, sub, "out of memory");
		return -1;
	}
	return 0;
}

/* Load the list of parts V (at PATH, in the network at NETPATH) into NET. */
static int network_load_parts(struct load_ctx *c, const struct ynode *v,
                              const char *path, const char *netpath,
                              struct network *net)
{
	char found[96];
	ytree_describe(v, found, sizeof found);
	if (v->type != YNODE_SEQUENCE || v->nkids == 0) {
		ytree_error(c->err, c->name, v, path,
		            "found %s, expected a list of parts (each with name, a "
		            "kind and value, from and to)",
		            v->type == YNODE_SEQUENCE ? "an empty list" : found);
		return -1;
	}
	if (v->nkids > NETWORK_MAX_PARTS) {
		ytree_error(c->err, c->name, v, path,
		            "found %zu parts, expected at most %d", v->nkids,
		            NETWORK_MAX_PARTS);
		return -1;
	}
	for (size_t k = 0; k < v->nkids; k++)
		if (network_load_part(c, v->kids[k], k, path, netpath, net) != 0)
			return -1;
	return 0;
}

/* Load the network mapping MAP into the session and reduce it. */
static int network_load(struct load_ctx *c, const struct session_section *sec,
                        const struct ynode *key, const struct ynode *map,
                        const char *path)
{
	(void)sec;
	const struct ynode *val[NET_NKEYS], *keys[NET_NKEYS];
	if (network_walk(c, map, path, net_keys, NET_NKEYS, "the network", val,
	                 keys) != 0)
		return -1;
	const struct ynode *at = key != NULL ? key : map;
	char sub[SECTION_PATH_MAX];
	for (size_t j = 0; j < NET_NKEYS; j++)
		if (val[j] == NULL) {
			section_path(sub, sizeof sub, path, net_keys[j]);
			ytree_error(c->err, c->name, at, sub,
			            "missing required key '%s' in the network (%s)",
			            net_keys[j], j == NET_BETWEEN
			            ? "[positive node, negative node] of the device"
			            : "the list of parts");
			return -1;
		}
	struct network *net = network_create();
	if (net == NULL) {
		ytree_error(c->err, c->name, at, path, "out of memory");
		return -1;
	}
	char bpath[SECTION_PATH_MAX], ppath[SECTION_PATH_MAX];
	section_path(bpath, sizeof bpath, path, net_keys[NET_BETWEEN]);
	section_path(ppath, sizeof ppath, path, net_keys[NET_PARTS]);
	if (network_load_parts(c, val[NET_PARTS], ppath, path, net) != 0 ||
	    network_load_between(c, val[NET_BETWEEN], bpath, net) != 0) {
		network_destroy(net);
		return -1;
	}
	struct source_spec spec;
	struct network_diag d;
	if (network_reduce(net, NULL, &spec, &d) != NETWORK_OK) {
		const struct ynode *where = val[NET_BETWEEN];
		const char *kp = bpath;
		if (d.part >= 0) {
			where = val[NET_PARTS]->kids[d.part];
			section_path(sub, sizeof sub, path,
			             network_part(net, (size_t)d.part)->name);
			kp = sub;
		} else if (d.status != NETWORK_BAD_TERMINALS &&
		           d.status != NETWORK_NOT_CONNECTED) {
			where = at;
			kp = path;
		}
		ytree_error(c->err, c->name, where, kp, "%s", d.message);
		network_destroy(net);
		return -1;
	}
	network_destroy(c->s->network);
	c->s->network = net;
	c->s->source = spec;
	return 0;
}

/* Write the network of S. */
static int network_save(struct emit_ctx *e, const struct session_section *sec,
                        const struct session *s)
{
	(void)sec;
	const struct network *net = s->network;
	size_t pos, neg;
	if (net == NULL || network_terminals(net, &pos, &neg) != 0) {
		e->failed = true;
		ytree_error_at(e->err, "", 0, 0, "source.network",
		               "cannot write a network without its terminals");
		return -1;
	}
	if (emit_mapping_start(e, false) != 0 ||
	    emit_scalar(e, net_keys[NET_BETWEEN], true) != 0 ||
	    emit_sequence_start(e, true) != 0 ||
	    emit_scalar(e, network_node_name(net, pos), false) != 0 ||
	    emit_scalar(e, network_node_name(net, neg), false) != 0 ||
	    emit_sequence_end(e) != 0 ||
	    emit_scalar(e, net_keys[NET_PARTS], true) != 0 ||
	    emit_sequence_start(e, false) != 0)
		return -1;
	for (size_t k = 0; k < network_part_count(net); k++) {
		const struct network_part *p = network_part(net, k);
		if (emit_mapping_start(e, false) != 0 ||
		    emit_scalar(e, part_keys[PART_NAME], true) != 0 ||
		    emit_scalar(e, p->name, false) != 0 ||
		    emit_scalar(e, part_keys[p->kind], true) != 0 ||
		    emit_number(e, p->value) != 0 ||
		    emit_scalar(e, part_keys[PART_FROM], true) != 0 ||
		    emit_scalar(e, network_node_name(net, p->from), false) != 0 ||
		    emit_scalar(e, part_keys[PART_TO], true) != 0 ||
		    emit_scalar(e, network_node_name(net, p->to), false) != 0 ||
		    emit_mapping_end(e) != 0)
			return -1;
	}
	return emit_sequence_end(e) != 0 ? -1 : emit_mapping_end(e);
}

const struct session_section section_network = {
	.key = "network",
	.fields = NULL,
	.nfields = 0,
	.load = network_load,
	.save = network_save,
};

/* True when doubles A and B have the same bits. */
static bool network_same(double a, double b)
{
	return memcmp(&a, &b, sizeof a) == 0;
}

/* True when A and B are the same network. */
bool session_network_equal(const struct network *a, const struct network *b)
{
	if (a == NULL || b == NULL)
		return a == b;
	size_t pa, na, pb, nb;
	bool ta = network_terminals(a, &pa, &na) == 0;
	bool tb = network_terminals(b, &pb, &nb) == 0;
	if (ta != tb || network_part_count(a) != network_part_count(b))
		return false;
	if (ta && (strcmp(network_node_name(a, pa), network_node_name(b, pb)) != 0 ||
	           strcmp(network_node_name(a, na), network_node_name(b, nb)) != 0))
		return false;
	for (size_t k = 0; k < network_part_count(a); k++) {
		const struct network_part *x = network_part(a, k);
		const struct network_part *y = network_part(b, k);
		if (x->kind != y->kind || !network_same(x->value, y->value) ||
		    strcmp(x->name, y->name) != 0 ||
		    strcmp(network_node_name(a, x->from),
		           network_node_name(b, y->from)) != 0 ||
		    strcmp(network_node_name(a, x->to),
		           network_node_name(b, y->to)) != 0)
			return false;
	}
	return true;
}

/* Reduce NET into *SPEC, naming the part at fault by its key path. */
int session_network_spec(const struct network *net, struct source_spec *spec,
                         char *err, size_t errlen)
{
	struct network_diag d;
	if (network_reduce(net, NULL, spec, &d) == NETWORK_OK)
		return 0;
	if (d.part >= 0)
		snprintf(err, errlen, "%s%s: %s", SESSION_NETWORK_PREFIX,
		         network_part(net, (size_t)d.part)->name, d.message);
	else
		snprintf(err, errlen, "source.network: %s", d.message);
	return -1;
}

/* The part at key path PATH in S's network, or -1. */
long session_network_find(const struct session *s, const char *path)
{
	size_t n = strlen(SESSION_NETWORK_PREFIX);
	if (s->network == NULL || strncmp(path, SESSION_NETWORK_PREFIX, n) != 0)
		return -1;
	return network_find_part(s->network, path + n);
}

/* Set the value at PATH and reduce again. */
int session_network_set_value(struct session *s, const char *path,
                              double value, char *err, size_t errlen)
{
	long k = session_network_find(s, path);
	if (k < 0) {
		snprintf(err, errlen, "%s: no such network part (expected %sNAME "
		         "with the name of a part)", path, SESSION_NETWORK_PREFIX);
		return -1;
	}
	const struct network_part *p = network_part(s->network, (size_t)k);
	double lo = kind_range[p->kind].min, hi = kind_range[p->kind].max;
	bool low = kind_range[p->kind].min_open ? !(value > lo) : !(value >= lo);
	if (low || !(value <= hi)) {
		char a[48], b[48];
		qty_format(a, sizeof a, lo, kind_range[p->kind].unit, 6, 1);
		qty_format(b, sizeof b, hi, kind_range[p->kind].unit, 6, 1);
		snprintf(err, errlen, "%s: %.6g is out of range: expected a value "
		         "in %s%s, %s]", path, value,
		         kind_range[p->kind].min_open ? "(" : "[", a, b);
		return -1;
	}
	double old = p->value;
	network_set_value(s->network, (size_t)k, value);
	struct source_spec spec;
	if (session_network_spec(s->network, &spec, err, errlen) != 0) {
		network_set_value(s->network, (size_t)k, old);
		return -1;
	}
	s->source = spec;
	return 0;
}
