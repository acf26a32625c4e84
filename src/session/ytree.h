/*
 * ytree.h - a small, strict YAML document tree built from libyaml's event
 * stream.  Only what a session file may hold gets through: one document,
 * a mapping at the root, no aliases, anchors or tags, bounded nesting and a
 * bounded number of nodes.  Every node keeps its 1-based line and column.
 *
 * Ownership: ytree_parse returns a tree that ytree_destroy frees.
 */
#ifndef BIASLINE_YTREE_H
#define BIASLINE_YTREE_H

#include <stdbool.h>
#include <stddef.h>

#include "session/session.h"

/* Nesting bound: a session needs 3 levels; later sections a few more. */
#define YTREE_MAX_DEPTH 16
/* Node bound: a session needs under a hundred; this leaves ample room. */
#define YTREE_MAX_NODES 100000

enum ynode_type { YNODE_SCALAR, YNODE_MAPPING, YNODE_SEQUENCE };

/* How a node was written: a scalar's quoting, a collection's form. */
enum ynode_style {
	YSTYLE_PLAIN,              /* scalar without quotes */
	YSTYLE_SINGLE,             /* 'scalar' */
	YSTYLE_DOUBLE,             /* "scalar" */
	YSTYLE_LITERAL,            /* | block scalar */
	YSTYLE_FOLDED,             /* > block scalar */
	YSTYLE_BLOCK,              /* a collection in block form (indented lines) */
	YSTYLE_FLOW,               /* a collection in flow form: [ ] or { } */
};

/* One node.  A mapping's children alternate key, value. */
struct ynode {
	enum ynode_type type;
	unsigned line, col;        /* 1-based start of the node */
	char *text;                /* scalar text (NUL-terminated), else NULL */
	size_t len;                /* scalar length in bytes */
	bool plain;                /* scalar written without quotes or block */
	enum ynode_style style;
	/*
	 * Byte offsets of the node in the parsed text: where it starts and
	 * where its last character ends (a quoted scalar with its quotes, a
	 * flow collection with its closing bracket, a block collection at the
	 * end of its last child).  What session_text patches in place.
	 */
	size_t off, end;
	struct ynode **kids;       /* children (mapping: key, value, ...) */
	size_t nkids;
	size_t cap;
};

/* A parsed document. */
struct ytree {
	struct ynode *root;        /* always a mapping */
	size_t nnodes;
};

/*
 * Parse BUF (LEN bytes, UTF-8) into *OUT.  NAME is the file name used in
 * errors.  Returns SESSION_OK, or SESSION_BAD_DATA with ERR filled and
 * *OUT set to NULL.  SESSION_IO_ERROR when out of memory.
 */
enum session_status ytree_parse(const char *name, const char *buf, size_t len,
                                struct ytree **out, struct session_error *err);

/* Free T (NULL is fine). */
void ytree_destroy(struct ytree *t);

/* The value of KEY in mapping MAP, or NULL (first match). */
const struct ynode *ytree_get(const struct ynode *map, const char *key);

/* Describe N for messages ("\"12 A\"", "a mapping", "a list", "nothing"). */
void ytree_describe(const struct ynode *n, char *buf, size_t len);

/* Fill ERR with NAME, the position of N (may be NULL), KEY and a message. */
void ytree_error(struct session_error *err, const char *name,
                 const struct ynode *n, const char *key, const char *fmt, ...)
	__attribute__((format(printf, 5, 6)));

/* Fill ERR with NAME, LINE:COL (1-based; 0 = none), KEY and a message. */
void ytree_error_at(struct session_error *err, const char *name, unsigned line,
                    unsigned col, const char *key, const char *fmt, ...)
	__attribute__((format(printf, 6, 7)));

#endif
