/*
 * section.h - the session file as tables.  Each part of a session owns one
 * section: a descriptor with a list of field descriptors (key, how to load
 * the YAML value into the session, how to write it back, whether it is
 * required, a help line).  One generic walker loads every section and one
 * generic writer saves it, so a new section is one table, not a new parser.
 *
 *   loading:  for each key of the section's mapping, in file order: known?
 *             (else "did you mean"), seen before? (duplicate); then each
 *             field in table order: load it, or complain when required;
 *             then the section's finish hook checks cross-field rules.
 *   saving:   each field in table order whose present() hook says yes.
 *
 * A section with keys that depend on a value (the device: its parameters
 * come from the chosen model's own table) supplies its own load and save.
 */
#ifndef BIASLINE_SECTION_H
#define BIASLINE_SECTION_H

#include <stdbool.h>
#include <stddef.h>

#include <yaml.h>

#include "core/quantity.h"
#include "session/session.h"
#include "session/ytree.h"

#define SECTION_MAX_FIELDS 32
#define SECTION_PATH_MAX 64

/* State while loading one file. */
struct load_ctx {
	const char *name;             /* file name for messages */
	struct session_error *err;
	struct session *s;            /* the session being filled */
	/* the status a failed load returns: SESSION_BAD_DATA unless a loader
	 * sets another (SESSION_NO_INPUT: a points_file cannot be read) */
	enum session_status status;
};

/* State while writing one file. */
struct emit_ctx {
	yaml_emitter_t *em;
	struct session_error *err;
	bool failed;
};

struct session_field;
struct session_section;

/* Load value V (under key node KEY, dotted PATH) into the session. */
typedef int (*field_load_fn)(struct load_ctx *c, const struct session_field *f,
                             const struct ynode *key, const struct ynode *v,
                             const char *path);
/* Write the field's value (the key is already written). */
typedef int (*field_save_fn)(struct emit_ctx *e, const struct session_field *f,
                             const struct session *s);
/* Whether the field is written for S. */
typedef bool (*field_present_fn)(const struct session_field *f,
                                 const struct session *s);

/* One key of a section. */
struct session_field {
	const char *key;
	field_load_fn load;
	field_save_fn save;
	field_present_fn present;     /* NULL: always written */
	size_t offset;                /* where in struct session the value lives */
	size_t offset2;               /* a second value (a range's maximum) */
	enum qty_kind kind;           /* for quantities and ranges */
	double min, max;              /* valid range of numbers */
	bool min_open, max_open;
	bool required;
	const struct session_section *section; /* for a nested section */
	const char *help;
};

/* One section: a mapping of fields. */
struct session_section {
	const char *key;              /* "source"; "" for the root */
	const struct session_field *fields;
	size_t nfields;
	/*
	 * Optional: replaces the generic walk (sections whose keys depend on a
	 * value).  KEY is the section's key node (NULL at the root).
	 */
	int (*load)(struct load_ctx *c, const struct session_section *sec,
	            const struct ynode *key, const struct ynode *map,
	            const char *path);
	/* Optional: replaces the generic writer. */
	int (*save)(struct emit_ctx *e, const struct session_section *sec,
	            const struct session *s);
	/*
	 * Optional: cross-field checks after the walk.  FOUND[k] is the value
	 * node of field k, FOUNDKEY[k] its key node (NULL when absent).
	 */
	int (*finish)(struct load_ctx *c, const struct session_section *sec,
	              const struct ynode *key, const struct ynode *map,
	              const struct ynode *const *found,
	              const struct ynode *const *foundkey, const char *path);
};

/* The sections (each defined in its own file). */
extern const struct session_section section_root;
extern const struct session_section section_source;
extern const struct session_section section_network;
extern const struct session_section section_device;
extern const struct session_section section_conditions;
extern const struct session_section section_reactive;
extern const struct session_section section_solver;
extern const struct session_section section_view;

/* Load mapping MAP as section SEC (generic walk or the section's own). */
int section_load(struct load_ctx *c, const struct session_section *sec,
                 const struct ynode *key, const struct ynode *map,
                 const char *path);

/* Write section SEC of S as a mapping (generic or the section's own). */
int section_save(struct emit_ctx *e, const struct session_section *sec,
                 const struct session *s);

/* True when any field of SEC is present in S (the section is written). */
bool section_present(const struct session_section *sec, const struct session *s);

/* Join PARENT and KEY into a dotted path in BUF. */
void section_path(char *buf, size_t n, const char *parent, const char *key);

/*
 * The closest of the N candidate words to WORD by edit distance, or NULL
 * when none is close enough to be a likely misspelling.
 */
const char *section_suggest(const char *word, const char *const *cands,
                            size_t n);

/* Require V to be a scalar with text; returns 0 or -1 with an error. */
int section_need_scalar(struct load_ctx *c, const struct ynode *v,
                        const char *path, const char *expected);

/*
 * Parse scalar V as a quantity of KIND in [MIN, MAX] (open ends as told)
 * into *OUT; returns 0 or -1 with an error naming PATH.
 */
int section_parse_qty(struct load_ctx *c, const struct ynode *v,
                      const char *path, enum qty_kind kind, double min,
                      double max, bool min_open, bool max_open, double *out);

/* Field loaders and savers shared by the tables. */
int field_load_qty(struct load_ctx *c, const struct session_field *f,
                   const struct ynode *key, const struct ynode *v,
                   const char *path);
int field_save_qty(struct emit_ctx *e, const struct session_field *f,
                   const struct session *s);
int field_load_section(struct load_ctx *c, const struct session_field *f,
                       const struct ynode *key, const struct ynode *v,
                       const char *path);
int field_save_section(struct emit_ctx *e, const struct session_field *f,
                       const struct session *s);
bool field_present_section(const struct session_field *f,
                           const struct session *s);
bool field_present_finite(const struct session_field *f,
                          const struct session *s);

/* Emitter helpers: each returns 0, or -1 with the error recorded. */
int emit_scalar(struct emit_ctx *e, const char *text, bool plain);
int emit_number(struct emit_ctx *e, double v);
void emit_number_text(char *buf, size_t n, double v);
int emit_mapping_start(struct emit_ctx *e, bool flow);
int emit_mapping_end(struct emit_ctx *e);
int emit_sequence_start(struct emit_ctx *e, bool flow);
int emit_sequence_end(struct emit_ctx *e);

/* Pointer to the double at F's offset in S. */
static inline double *field_double(struct session *s,
                                   const struct session_field *f)
{
	return (double *)(void *)((char *)s + f->offset);
}

/* Read-only pointer to the double at F's offset in S. */
static inline const double *field_double_const(const struct session *s,
                                               const struct session_field *f)
{
	return (const double *)(const void *)((const char *)s + f->offset);
}

#endif
