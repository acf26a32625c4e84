/*
 * ytree.c - build a strict document tree from libyaml's event parser.
 *
 * The event parser keeps its own explicit stacks, so counting depth as the
 * start events arrive lets us refuse deep nesting before any recursion of
 * ours could run.  Constructs a session never needs are refused where they
 * appear: aliases and anchors (YAML 1.2, section 3.2.2.2 / 6.9.2 - a tree
 * walk of aliases can explode, the "billion laughs" file), explicit tags
 * (YAML 1.2, section 6.9.1) and %TAG directives, and further documents in
 * the same stream (YAML 1.2, section 9.2).
 */
#include "session/ytree.h"

#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <yaml.h>

/* Fill ERR with NAME, LINE:COL, KEY and a formatted message (va_list form). */
__attribute__((format(printf, 6, 0)))
static void ytree_verror(struct session_error *err, const char *name,
                         unsigned line, unsigned col, const char *key,
                         const char *fmt, va_list ap)
{
	if (err == NULL)
		return;
	snprintf(err->file, sizeof err->file, "%s", name != NULL ? name : "");
	err->line = line;
	err->col = col;
	snprintf(err->key, sizeof err->key, "%s", key != NULL ? key : "");
	vsnprintf(err->message, sizeof err->message, fmt, ap);
}

/* Fill ERR with a position given as line and column. */
void ytree_error_at(struct session_error *err, const char *name, unsigned line,
                    unsigned col, const char *key, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	ytree_verror(err, name, line, col, key, fmt, ap);
	va_end(ap);
}

/* Fill ERR with the position of node N. */
void ytree_error(struct session_error *err, const char *name,
                 const struct ynode *n, const char *key, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	ytree_verror(err, name, n != NULL ? n->line : 0, n != NULL ? n->col : 0,
	             key, fmt, ap);
	va_end(ap);
}

/* Free node N and its children, iteratively safe for our bounded depth. */
static void ynode_free(struct ynode *n)
{
	if (n == NULL)
		return;
	for (size_t k = 0; k < n->nkids; k++)
		ynode_free(n->kids[k]);
	free(n->kids);
	free(n->text);
	free(n);
}

/* Free T. */
void ytree_destroy(struct ytree *t)
{
	if (t == NULL)
		return;
	ynode_free(t->root);
	free(t);
}

/* Append child C to P; returns 0 or -1 on no memory. */
static int ynode_append(struct ynode *p, struct ynode *c)
{
	if (p->nkids == p->cap) {
		size_t cap = p->cap ? 2 * p->cap : 8;
		struct ynode **k = realloc(p->kids, cap * sizeof *k);
		if (k == NULL)
			return -1;
		p->kids = k;
		p->cap = cap;
	}
	p->kids[p->nkids++] = c;
	return 0;
}

/* The value of KEY in mapping MAP. */
const struct ynode *ytree_get(const struct ynode *map, const char *key)
{
	if (map == NULL || map->type != YNODE_MAPPING)
		return NULL;
	for (size_t k = 0; k + 1 < map->nkids; k += 2) {
		const struct ynode *kn = map->kids[k];
		if (kn->type == YNODE_SCALAR && strcmp(kn->text, key) == 0)
			return map->kids[k + 1];
	}
	return NULL;
}

/* Describe N for messages: a quoted, shortened scalar or the node kind. */
void ytree_describe(const struct ynode *n, char *buf, size_t len)
{
	if (n == NULL) {
		snprintf(buf, len, "nothing");
		return;
	}
	if (n->type == YNODE_MAPPING) {
		snprintf(buf, len, "a mapping");
		return;
	}
	if (n->type == YNODE_SEQUENCE) {
		snprintf(buf, len, "a list");
		return;
	}
	if (n->len == 0) {
		snprintf(buf, len, n->plain ? "nothing" : "an empty string");
		return;
	}
	char shown[64];
	size_t o = 0, k = 0;
	for (; k < n->len && o + 5 < sizeof shown; k++) {
		unsigned char c = (unsigned char)n->text[k];
		if (c == '\n') {
			shown[o++] = '\\';
			shown[o++] = 'n';
		} else if (c < 0x20 || c == 0x7f) {
			o += (size_t)snprintf(shown + o, sizeof shown - o, "\\x%02x", c);
		} else {
			shown[o++] = (char)c;
		}
	}
	shown[o] = '\0';
	bool cut = k < n->len;
	/* do not cut a UTF-8 sequence in the middle */
	if (cut && o > 0 && ((unsigned char)shown[o - 1] & 0x80) != 0) {
		while (o > 0 && ((unsigned char)shown[o - 1] & 0xc0) == 0x80)
			o--;
		if (o > 0 && ((unsigned char)shown[o - 1] & 0xc0) == 0xc0)
			o--;
		shown[o] = '\0';
	}
	snprintf(buf, len, "\"%s%s\"", shown, cut ? "..." : "");
}

/* Line and column (1-based) of byte OFFSET in BUF, counting characters. */
static void ytree_offset_position(const char *buf, size_t len, size_t offset,
                                  unsigned *line, unsigned *col)
{
	unsigned l = 1, c = 1;
	if (offset > len)
		offset = len;
	for (size_t k = 0; k < offset; k++) {
		unsigned char b = (unsigned char)buf[k];
		if (b == '\n') {
			l++;
			c = 1;
		} else if ((b & 0xc0) != 0x80) {
			c++;
		}
	}
	*line = l;
	*col = c;
}

/* Fill ERR from a libyaml parser error. */
static void ytree_parser_error(const yaml_parser_t *p, const char *name,
                               const char *buf, size_t len,
                               struct session_error *err)
{
	const char *problem = p->problem != NULL ? p->problem : "unknown problem";
	if (p->error == YAML_MEMORY_ERROR) {
		ytree_error_at(err, name, 0, 0, "", "out of memory while reading");
		return;
	}
	if (p->error == YAML_READER_ERROR) {
		unsigned line, col;
		ytree_offset_position(buf, len, p->problem_offset, &line, &col);
		if (strstr(problem, "UTF-8") != NULL || strstr(problem, "utf-8") != NULL)
			ytree_error_at(err, name, line, col, "",
			               "the file is not valid UTF-8 text (%s, byte 0x%02x "
			               "at offset %zu); save it as UTF-8",
			               problem, (unsigned)(p->problem_value & 0xff),
			               p->problem_offset);
		else
			ytree_error_at(err, name, line, col, "",
			               "unreadable character (%s, value 0x%x); a session "
			               "file holds printable UTF-8 text only",
			               problem, (unsigned)p->problem_value);
		return;
	}
	unsigned line = (unsigned)p->problem_mark.line + 1;
	unsigned col = (unsigned)p->problem_mark.column + 1;
	if (p->context != NULL)
		ytree_error_at(err, name, line, col, "",
		               "YAML syntax error: %s %s (line %u)", problem,
		               p->context, (unsigned)p->context_mark.line + 1);
	else
		ytree_error_at(err, name, line, col, "", "YAML syntax error: %s",
		               problem);
}

/* Parser state while building. */
struct ytree_build {
	const char *name;
	struct session_error *err;
	struct ytree *tree;
	struct ynode *stack[YTREE_MAX_DEPTH + 1];
	size_t depth;
	/* turning libyaml's marks (characters counted after a byte order
	 * mark) into byte offsets: the text and a cursor that walks it */
	const char *buf;
	size_t len, base;          /* BASE: bytes of the byte order mark */
	size_t cur_index, cur_byte;
};

/* The byte offset in the text of the character at INDEX. */
static size_t ytree_byte_of(struct ytree_build *b, size_t index)
{
	const unsigned char *t = (const unsigned char *)b->buf;
	while (b->cur_index < index && b->cur_byte < b->len) {
		b->cur_byte++;
		while (b->cur_byte < b->len && (t[b->cur_byte] & 0xc0) == 0x80)
			b->cur_byte++;
		b->cur_index++;
	}
	while (b->cur_index > index && b->cur_byte > b->base) {
		b->cur_byte--;
		while (b->cur_byte > b->base && (t[b->cur_byte] & 0xc0) == 0x80)
			b->cur_byte--;
		b->cur_index--;
	}
	return b->cur_byte;
}

/* Create a node of TYPE at MARK and attach it to the open collection. */
static struct ynode *ytree_add(struct ytree_build *b, enum ynode_type type,
                               yaml_mark_t mark)
{
	if (b->tree->nnodes >= YTREE_MAX_NODES) {
		ytree_error_at(b->err, b->name, (unsigned)mark.line + 1,
		               (unsigned)mark.column + 1, "",
		               "too many values (more than %d); a session file is "
		               "far smaller", YTREE_MAX_NODES);
		return NULL;
	}
	struct ynode *n = calloc(1, sizeof *n);
	if (n == NULL) {
		ytree_error_at(b->err, b->name, 0, 0, "", "out of memory while reading");
		return NULL;
	}
	n->type = type;
	n->line = (unsigned)mark.line + 1;
	n->col = (unsigned)mark.column + 1;
	n->off = ytree_byte_of(b, mark.index);
	n->end = n->off;
	if (b->depth == 0) {
		b->tree->root = n;
	} else if (ynode_append(b->stack[b->depth - 1], n) != 0) {
		free(n);
		ytree_error_at(b->err, b->name, 0, 0, "", "out of memory while reading");
		return NULL;
	}
	b->tree->nnodes++;
	return n;
}

/* Refuse anchors and tags on a node event; returns 0 or -1 with ERR. */
static int ytree_check_props(struct ytree_build *b, const yaml_event_t *ev,
                             const yaml_char_t *anchor, const yaml_char_t *tag)
{
	unsigned line = (unsigned)ev->start_mark.line + 1;
	unsigned col = (unsigned)ev->start_mark.column + 1;
	if (anchor != NULL) {
		ytree_error_at(b->err, b->name, line, col, "",
		               "found the anchor '&%.40s', expected plain values: "
		               "anchors and aliases are not allowed in session files",
		               (const char *)anchor);
		return -1;
	}
	if (tag != NULL) {
		ytree_error_at(b->err, b->name, line, col, "",
		               "found the tag '%.60s', expected an untagged value: "
		               "tags are not allowed in session files",
		               (const char *)tag);
		return -1;
	}
	return 0;
}

/* Handle one event; returns 1 at the end of the first document, 0 to go on, -1 on error. */
static int ytree_event(struct ytree_build *b, const yaml_event_t *ev)
{
	unsigned line = (unsigned)ev->start_mark.line + 1;
	unsigned col = (unsigned)ev->start_mark.column + 1;
	struct ynode *n;

	switch (ev->type) {
	case YAML_STREAM_START_EVENT:
		return 0;
	case YAML_STREAM_END_EVENT:
		if (b->tree->root == NULL) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "the file is empty, expected a session (a mapping "
			               "with source: and device:)");
			return -1;
		}
		return 1;
	case YAML_DOCUMENT_START_EVENT:
		if (b->tree->root != NULL) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "found a second document, expected one session "
			               "per file");
			return -1;
		}
		if (ev->data.document_start.tag_directives.start !=
		    ev->data.document_start.tag_directives.end) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "found a %%TAG directive, expected none: tags are "
			               "not allowed in session files");
			return -1;
		}
		return 0;
	case YAML_DOCUMENT_END_EVENT:
		return 0;
	case YAML_ALIAS_EVENT:
		ytree_error_at(b->err, b->name, line, col, "",
		               "found the alias '*%.40s', expected a plain value: "
		               "anchors and aliases are not allowed in session files",
		               (const char *)ev->data.alias.anchor);
		return -1;
	case YAML_SCALAR_EVENT:
		if (ytree_check_props(b, ev, ev->data.scalar.anchor,
		                      ev->data.scalar.tag) != 0)
			return -1;
		if (b->depth == 0) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "found a single value, expected a session (a "
			               "mapping with source: and device:)");
			return -1;
		}
		if (strlen((const char *)ev->data.scalar.value) != ev->data.scalar.length) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "found a NUL character in a value, expected text");
			return -1;
		}
		n = ytree_add(b, YNODE_SCALAR, ev->start_mark);
		if (n == NULL)
			return -1;
		n->text = malloc(ev->data.scalar.length + 1);
		if (n->text == NULL) {
			ytree_error_at(b->err, b->name, 0, 0, "",
			               "out of memory while reading");
			return -1;
		}
		memcpy(n->text, ev->data.scalar.value, ev->data.scalar.length);
		n->text[ev->data.scalar.length] = '\0';
		n->len = ev->data.scalar.length;
		n->plain = ev->data.scalar.style == YAML_PLAIN_SCALAR_STYLE;
		switch (ev->data.scalar.style) {
		case YAML_SINGLE_QUOTED_SCALAR_STYLE: n->style = YSTYLE_SINGLE; break;
		case YAML_DOUBLE_QUOTED_SCALAR_STYLE: n->style = YSTYLE_DOUBLE; break;
		case YAML_LITERAL_SCALAR_STYLE: n->style = YSTYLE_LITERAL; break;
		case YAML_FOLDED_SCALAR_STYLE: n->style = YSTYLE_FOLDED; break;
		case YAML_ANY_SCALAR_STYLE:
		case YAML_PLAIN_SCALAR_STYLE:
		default: n->style = YSTYLE_PLAIN; break;
		}
		n->end = ytree_byte_of(b, ev->end_mark.index);
		return 0;
	case YAML_SEQUENCE_START_EVENT:
	case YAML_MAPPING_START_EVENT: {
		bool map = ev->type == YAML_MAPPING_START_EVENT;
		const yaml_char_t *anchor = map ? ev->data.mapping_start.anchor
		                                : ev->data.sequence_start.anchor;
		const yaml_char_t *tag = map ? ev->data.mapping_start.tag
		                             : ev->data.sequence_start.tag;
		if (ytree_check_props(b, ev, anchor, tag) != 0)
			return -1;
		if (b->depth == 0 && !map) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "found a list, expected a session (a mapping with "
			               "source: and device:)");
			return -1;
		}
		if (b->depth >= YTREE_MAX_DEPTH) {
			ytree_error_at(b->err, b->name, line, col, "",
			               "nesting deeper than %d levels, expected a session "
			               "(sections hold values, lists of numbers at most)",
			               YTREE_MAX_DEPTH);
			return -1;
		}
		n = ytree_add(b, map ? YNODE_MAPPING : YNODE_SEQUENCE, ev->start_mark);
		if (n == NULL)
			return -1;
		bool flow = map ? ev->data.mapping_start.style == YAML_FLOW_MAPPING_STYLE
		                : ev->data.sequence_start.style == YAML_FLOW_SEQUENCE_STYLE;
		n->style = flow ? YSTYLE_FLOW : YSTYLE_BLOCK;
		b->stack[b->depth++] = n;
		return 0;
	}
	case YAML_SEQUENCE_END_EVENT:
	case YAML_MAPPING_END_EVENT:
		if (b->depth > 0) {
			/* a flow collection ends after its bracket; a block one
			 * where its last child ends (its end event comes at the
			 * next token, past any comments) */
			n = b->stack[--b->depth];
			if (n->style == YSTYLE_FLOW)
				n->end = ytree_byte_of(b, ev->end_mark.index);
			else if (n->nkids > 0)
				n->end = n->kids[n->nkids - 1]->end;
		}
		return 0;
	case YAML_NO_EVENT:
	default:
		return 0;
	}
}

/* Parse BUF into a tree. */
enum session_status ytree_parse(const char *name, const char *buf, size_t len,
                                struct ytree **out, struct session_error *err)
{
	*out = NULL;
	struct ytree *t = calloc(1, sizeof *t);
	if (t == NULL) {
		ytree_error_at(err, name, 0, 0, "", "out of memory while reading");
		return SESSION_IO_ERROR;
	}
	yaml_parser_t p;
	if (!yaml_parser_initialize(&p)) {
		free(t);
		ytree_error_at(err, name, 0, 0, "", "out of memory while reading");
		return SESSION_IO_ERROR;
	}
	/*
	 * Session files are UTF-8; no guessing of UTF-16 from a byte order
	 * mark.  A UTF-8 one (some editors write it) is passed over here: with
	 * the encoding set, libyaml would read it as a character in column 0
	 * and put the first key out of line with the rest.
	 */
	size_t bom = len >= 3 && memcmp(buf, "\xef\xbb\xbf", 3) == 0 ? 3 : 0;
	yaml_parser_set_encoding(&p, YAML_UTF8_ENCODING);
	yaml_parser_set_input_string(&p, (const unsigned char *)buf + bom, len - bom);

	/* libyaml's marks count characters from the first byte it reads */
	struct ytree_build b = { .name = name, .err = err, .tree = t,
	                         .buf = buf, .len = len, .base = bom,
	                         .cur_byte = bom };
	int rc = 0;
	while (rc == 0) {
		yaml_event_t ev;
		if (!yaml_parser_parse(&p, &ev)) {
			ytree_parser_error(&p, name, buf + bom, len - bom, err);
			rc = p.error == YAML_MEMORY_ERROR ? -2 : -1;
			break;
		}
		rc = ytree_event(&b, &ev);
		yaml_event_delete(&ev);
	}
	yaml_parser_delete(&p);
	if (rc < 0) {
		ytree_destroy(t);
		return rc == -2 ? SESSION_IO_ERROR : SESSION_BAD_DATA;
	}
	*out = t;
	return SESSION_OK;
}
