/*
 * session.c - the session: defaults, copy and comparison, loading a file
 * (size-checked, read into memory, parsed by the strict tree builder and
 * the section tables), saving (libyaml's emitter behind a comment header,
 * written atomically), the built-in demo and the core problem.
 */
#include "session/session.h"

#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <yaml.h>

#include "biasline_version.h"
#include "core/models/models.h"
#include "session/atomic.h"
#include "session/section.h"
#include "session/section_network.h"
#include "session/ytree.h"

/* Largest session file read: far above any real one, small enough to hold. */
#define SESSION_MAX_BYTES (4u * 1024u * 1024u)

/*
 * Fill S with the defaults: the demo's circuit (see session_demo) with the
 * default solver settings, so a fresh session is valid and can be saved.
 */
void session_init(struct session *s)
{
	memset(s, 0, sizeof *s);
	source_spec_thevenin(&s->source, 24.0, 2200.0);
	const struct model_type *diode = model_find("diode");
	device_init(&s->device, diode != NULL ? diode : model_registry[0]);
	if (diode != NULL) {
		/* invented demo values: a green indicator LED, about 2.1 V at 10 mA */
		s->device.p[model_param_index(diode, "saturation_current")] = 6.3e-21;
		s->device.p[model_param_index(diode, "ideality")] = 1.93;
		s->device.p[model_param_index(diode, "series_resistance")] = 6.8;
	}
	s->conditions.temperature = NAN;
	solve_options_init(&s->solver);
	s->view.autoscale = true;
	s->view.v_min = 0.0;
	s->view.v_max = 1.0;
	s->view.i_min = 0.0;
	s->view.i_max = 1.0;
	s->view.zoom = 1.0;
	reactive_parts_init(&s->reactive);
	session_analysis_init(&s->analysis);
	s->notes = NULL;
	s->fitted_to = NULL;
}

/* Free the measured table C (NULL is fine). */
static void session_curve_free(struct curve_data *c)
{
	if (c == NULL)
		return;
	curve_data_fini(c);
	free(c);
}

/* Give S its own copy of the points and point the device at it. */
int session_set_curve(struct session *s, const double *v, const double *i,
                      size_t n, char *err, size_t errlen)
{
	struct curve_data *c = malloc(sizeof *c);
	if (c == NULL) {
		snprintf(err, errlen, "points: out of memory");
		return -1;
	}
	if (curve_data_init(c, v, i, n, err, errlen) != 0) {
		free(c);
		return -1;
	}
	session_curve_free(s->curve);
	s->curve = c;
	s->device.curve = c;
	return 0;
}

/* Free what S owns. */
void session_fini(struct session *s)
{
	free(s->notes);
	s->notes = NULL;
	free(s->fitted_to);
	s->fitted_to = NULL;
	/* the device only borrows the table: drop the pointer with it */
	if (s->device.curve == s->curve)
		s->device.curve = NULL;
	session_curve_free(s->curve);
	s->curve = NULL;
	network_destroy(s->network);
	s->network = NULL;
}

/* Deep-copy SRC into DST. */
int session_copy(struct session *dst, const struct session *src)
{
	char *notes = NULL;
	if (src->notes != NULL) {
		size_t n = strlen(src->notes) + 1;
		notes = malloc(n);
		if (notes == NULL)
			return -1;
		memcpy(notes, src->notes, n);
	}
	char *fitted = NULL;
	if (src->fitted_to != NULL) {
		size_t n = strlen(src->fitted_to) + 1;
		fitted = malloc(n);
		if (fitted == NULL) {
			free(notes);
			return -1;
		}
		memcpy(fitted, src->fitted_to, n);
	}
	struct network *net = NULL;
	if (src->network != NULL && (net = network_copy(src->network)) == NULL) {
		free(fitted);
		free(notes);
		return -1;
	}
	/* the points are copied too, and the copy's device borrows its own
	 * table: a shallow copy would leave it pointing into SRC */
	struct curve_data *curve = NULL;
	if (src->curve != NULL) {
		curve = malloc(sizeof *curve);
		if (curve == NULL || curve_data_copy(curve, src->curve) != 0) {
			free(curve);
			network_destroy(net);
			free(fitted);
			free(notes);
			return -1;
		}
	}
	const struct curve_data *borrowed = src->device.curve;
	if (borrowed != NULL && borrowed == src->curve)
		borrowed = curve;
	struct curve_data *old_curve = dst->curve;
	if (dst != src) {
		free(dst->notes);
		free(dst->fitted_to);
		network_destroy(dst->network);
		*dst = *src;
	} else {
		free(dst->notes);
		free(dst->fitted_to);
		network_destroy(dst->network);
	}
	session_curve_free(old_curve);
	dst->notes = notes;
	dst->fitted_to = fitted;
	dst->network = net;
	dst->curve = curve;
	dst->device.curve = borrowed;
	return 0;
}

/* True when doubles A and B have the same bits. */
static bool session_same(double a, double b)
{
	return memcmp(&a, &b, sizeof a) == 0;
}

/* True when the devices' tables A and B (either may be NULL) are the same. */
static bool session_curve_equal(const struct curve_data *a,
                                const struct curve_data *b)
{
	if (a == NULL || b == NULL)
		return a == b;
	if (a->n != b->n)
		return false;
	for (size_t k = 0; k < a->n; k++)
		if (!session_same(a->v[k], b->v[k]) || !session_same(a->i[k], b->i[k]))
			return false;
	return true;
}

/* True when A and B hold the same session. */
bool session_equal(const struct session *a, const struct session *b)
{
	const struct source_spec *x = &a->source, *y = &b->source;
	if (x->form != y->form || !session_same(x->vs, y->vs) ||
	    !session_same(x->rs, y->rs) || !session_same(x->is, y->is) ||
	    !session_same(x->rp, y->rp))
		return false;
	if (!session_network_equal(a->network, b->network))
		return false;
	if (!session_analysis_equal(&a->analysis, &b->analysis))
		return false;
	if (a->device.type != b->device.type)
		return false;
	for (size_t k = 0; k < MODEL_MAX_PARAMS; k++)
		if (!session_same(a->device.p[k], b->device.p[k]))
			return false;
	if (!session_curve_equal(a->device.curve, b->device.curve))
		return false;
	if (!session_same(a->conditions.temperature, b->conditions.temperature))
		return false;
	const struct solve_options *p = &a->solver, *q = &b->solver;
	if (p->method != q->method || p->order != q->order ||
	    !session_same(p->start_v, q->start_v) ||
	    !session_same(p->omega, q->omega) || !session_same(p->tol, q->tol) ||
	    p->max_steps != q->max_steps)
		return false;
	const struct session_view *v = &a->view, *w = &b->view;
	if (v->autoscale != w->autoscale || !session_same(v->v_min, w->v_min) ||
	    !session_same(v->v_max, w->v_max) || !session_same(v->i_min, w->i_min) ||
	    !session_same(v->i_max, w->i_max) || !session_same(v->zoom, w->zoom))
		return false;
	if (!session_same(a->reactive.capacitance_across_device,
	                  b->reactive.capacitance_across_device) ||
	    !session_same(a->reactive.inductance_in_series,
	                  b->reactive.inductance_in_series))
		return false;
	if ((a->fitted_to == NULL) != (b->fitted_to == NULL) ||
	    (a->fitted_to != NULL && strcmp(a->fitted_to, b->fitted_to) != 0))
		return false;
	if ((a->notes == NULL) != (b->notes == NULL))
		return false;
	return a->notes == NULL || strcmp(a->notes, b->notes) == 0;
}

/* Format ERR as "FILE:LINE:COL: KEY: MESSAGE". */
void session_error_format(const struct session_error *err, char *buf, size_t n)
{
	char pos[32] = "";
	if (err->line > 0)
		snprintf(pos, sizeof pos, ":%u:%u", err->line, err->col);
	snprintf(buf, n, "%s%s: %s%s%s", err->file[0] ? err->file : "(session)",
	         pos, err->key, err->key[0] ? ": " : "", err->message);
}

/* Load from a memory buffer. */
enum session_status session_load_buffer(struct session *s, const char *name,
                                        const char *buf, size_t len,
                                        struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	memset(err, 0, sizeof *err);
	session_init(s);
	if (len > SESSION_MAX_BYTES) {
		ytree_error_at(err, name, 0, 0, "",
		               "the file is %zu bytes, expected at most %u: a session "
		               "file is far smaller", len, SESSION_MAX_BYTES);
		return SESSION_BAD_DATA;
	}
	struct ytree *t = NULL;
	enum session_status st = ytree_parse(name, buf, len, &t, err);
	if (st != SESSION_OK) {
		session_fini(s);
		return st;
	}
	struct load_ctx c = { .name = name, .err = err, .s = s,
	                      .status = SESSION_BAD_DATA };
	int rc = section_load(&c, &section_root, NULL, t->root, "");
	ytree_destroy(t);
	if (rc != 0) {
		session_fini(s);
		return c.status;
	}
	return SESSION_OK;
}

/* Read the session file PATH into a new buffer. */
enum session_status session_read_file(const char *path, char **out,
                                      size_t *outlen, struct session_error *err)
{
	*out = NULL;
	*outlen = 0;
	/* non-blocking open: a FIFO without a writer must not hang us */
	int fd = open(path, O_RDONLY | O_NOCTTY | O_NONBLOCK);
	if (fd < 0) {
		ytree_error_at(err, path, 0, 0, "", "cannot open the file: %s",
		               strerror(errno));
		return SESSION_NO_INPUT;
	}
	struct stat st;
	if (fstat(fd, &st) != 0) {
		int e = errno;
		close(fd);
		ytree_error_at(err, path, 0, 0, "", "cannot read the file: %s",
		               strerror(e));
		return SESSION_NO_INPUT;
	}
	if (!S_ISREG(st.st_mode)) {
		close(fd);
		ytree_error_at(err, path, 0, 0, "", "cannot read the file: %s",
		               S_ISDIR(st.st_mode) ? "it is a folder"
		                                   : "not a regular file");
		return SESSION_NO_INPUT;
	}
	if ((unsigned long long)st.st_size > SESSION_MAX_BYTES) {
		close(fd);
		ytree_error_at(err, path, 0, 0, "",
		               "the file is %lld bytes, expected at most %u: a session "
		               "file is far smaller", (long long)st.st_size,
		               SESSION_MAX_BYTES);
		return SESSION_BAD_DATA;
	}
	FILE *f = fdopen(fd, "rb");
	if (f == NULL) {
		int e = errno;
		close(fd);
		ytree_error_at(err, path, 0, 0, "", "cannot read the file: %s",
		               strerror(e));
		return SESSION_NO_INPUT;
	}
	/* read one byte more than allowed, in case the file grew meanwhile */
	size_t cap = (size_t)st.st_size + 1;
	char *buf = malloc(cap + 1);
	if (buf == NULL) {
		fclose(f);
		ytree_error_at(err, path, 0, 0, "", "out of memory");
		return SESSION_IO_ERROR;
	}
	size_t len = fread(buf, 1, cap, f);
	int bad = ferror(f);
	int e = errno;
	fclose(f);
	if (bad) {
		free(buf);
		ytree_error_at(err, path, 0, 0, "", "cannot read the file: %s",
		               strerror(e));
		return SESSION_NO_INPUT;
	}
	if (len == cap) {
		free(buf);
		ytree_error_at(err, path, 0, 0, "",
		               "the file changed size while being read");
		return SESSION_NO_INPUT;
	}
	buf[len] = '\0';
	*out = buf;
	*outlen = len;
	return SESSION_OK;
}

/* Load PATH. */
enum session_status session_load_file(struct session *s, const char *path,
                                      struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	memset(err, 0, sizeof *err);
	session_init(s);
	char *buf;
	size_t len;
	enum session_status r = session_read_file(path, &buf, &len, err);
	if (r != SESSION_OK)
		return r;
	r = session_load_buffer(s, path, buf, len, err);
	free(buf);
	return r;
}

/* A growing output buffer for the emitter. */
struct session_out {
	char *buf;
	size_t len, cap;
};

/* Append N bytes of DATA to OUT; returns 0 or -1 on no memory. */
static int session_out_put(struct session_out *out, const void *data, size_t n)
{
	if (out->len + n + 1 > out->cap) {
		size_t cap = out->cap ? out->cap : 1024;
		while (out->len + n + 1 > cap)
			cap *= 2;
		char *b = realloc(out->buf, cap);
		if (b == NULL)
			return -1;
		out->buf = b;
		out->cap = cap;
	}
	memcpy(out->buf + out->len, data, n);
	out->len += n;
	out->buf[out->len] = '\0';
	return 0;
}

/* libyaml write handler: append to a session_out (1 = success). */
static int session_out_write(void *data, unsigned char *buffer, size_t size)
{
	return session_out_put(data, buffer, size) == 0;
}

/* Emit S as one YAML document with EM. */
static int session_emit(yaml_emitter_t *em, const struct session *s,
                        struct session_error *err)
{
	struct emit_ctx e = { .em = em, .err = err };
	yaml_event_t ev;
	if (!yaml_stream_start_event_initialize(&ev, YAML_UTF8_ENCODING) ||
	    !yaml_emitter_emit(em, &ev) ||
	    !yaml_document_start_event_initialize(&ev, NULL, NULL, NULL, 1) ||
	    !yaml_emitter_emit(em, &ev)) {
		ytree_error_at(err, "", 0, 0, "", "cannot start the YAML output: %s",
		               em->problem != NULL ? em->problem : "out of memory");
		return -1;
	}
	if (section_save(&e, &section_root, s) != 0)
		return -1;
	if (!yaml_document_end_event_initialize(&ev, 1) ||
	    !yaml_emitter_emit(em, &ev) ||
	    !yaml_stream_end_event_initialize(&ev) || !yaml_emitter_emit(em, &ev) ||
	    !yaml_emitter_flush(em)) {
		ytree_error_at(err, "", 0, 0, "", "cannot finish the YAML output: %s",
		               em->problem != NULL ? em->problem : "out of memory");
		return -1;
	}
	return 0;
}

/* Write S with optional extra comment lines after the header. */
enum session_status session_save_buffer_with(const struct session *s,
                                             const char *extra, char **out,
                                             size_t *len,
                                             struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	memset(err, 0, sizeof *err);
	*out = NULL;
	*len = 0;
	struct session_out o = { 0 };
	char head[128];
	snprintf(head, sizeof head, "# biasline session, written by biasline %s\n",
	         BIASLINE_VERSION);
	int bad = session_out_put(&o, head, strlen(head));
	for (const char *p = extra; p != NULL && *p != '\0' && bad == 0;) {
		size_t n = strcspn(p, "\n");
		if (n > 0 && p[0] != '#')
			bad = session_out_put(&o, "# ", 2);
		if (bad == 0)
			bad = session_out_put(&o, p, n);
		if (bad == 0)
			bad = session_out_put(&o, "\n", 1);
		p += n;
		if (*p == '\n')
			p++;
	}
	if (bad != 0) {
		free(o.buf);
		ytree_error_at(err, "", 0, 0, "", "out of memory while writing");
		return SESSION_IO_ERROR;
	}
	yaml_emitter_t em;
	if (!yaml_emitter_initialize(&em)) {
		free(o.buf);
		ytree_error_at(err, "", 0, 0, "", "out of memory while writing");
		return SESSION_IO_ERROR;
	}
	yaml_emitter_set_output(&em, session_out_write, &o);
	yaml_emitter_set_unicode(&em, 1);
	yaml_emitter_set_width(&em, 78);
	yaml_emitter_set_indent(&em, 2);
	int rc = session_emit(&em, s, err);
	yaml_emitter_delete(&em);
	if (rc != 0) {
		free(o.buf);
		return SESSION_IO_ERROR;
	}
	*out = o.buf;
	*len = o.len;
	return SESSION_OK;
}

/* The leading comment block of the text BUF, without biasline's header. */
char *session_buffer_comments(const char *buf, size_t len)
{
	static const char own[] = "# biasline session, written by biasline";
	struct session_out o = { 0 };
	size_t blank = 0; /* blank lines held until a comment follows */
	int bad = 0;
	size_t start = len >= 3 && memcmp(buf, "\xef\xbb\xbf", 3) == 0 ? 3 : 0;
	for (size_t at = start; bad == 0 && at < len && o.len < SESSION_MAX_BYTES;) {
		const char *line = buf + at;
		const char *nl = memchr(line, '\n', len - at);
		size_t n = nl != NULL ? (size_t)(nl - line) : len - at;
		at += n + (nl != NULL ? 1 : 0);
		size_t k = 0;
		while (k < n && (line[k] == ' ' || line[k] == '\t' || line[k] == '\r'))
			k++;
		if (k == n) {
			blank++;
			continue;
		}
		if (line[0] != '#')
			break;
		if (n >= sizeof own - 1 && strncmp(line, own, sizeof own - 1) == 0)
			continue;
		for (; blank > 0 && o.len > 0 && bad == 0; blank--)
			bad = session_out_put(&o, "\n", 1);
		blank = 0;
		while (n > 0 && line[n - 1] == '\r')
			n--;
		if (bad == 0)
			bad = session_out_put(&o, line, n);
		if (bad == 0)
			bad = session_out_put(&o, "\n", 1);
	}
	if (bad != 0) {
		free(o.buf);
		return NULL;
	}
	/* drop the final line break: the writer adds one per line */
	if (o.len > 0 && o.buf[o.len - 1] == '\n')
		o.buf[--o.len] = '\0';
	return o.buf;
}

/* The leading comment block of PATH, without biasline's own header. */
char *session_file_comments(const char *path)
{
	char *buf;
	size_t len;
	struct session_error err;
	if (session_read_file(path, &buf, &len, &err) != SESSION_OK)
		return NULL;
	char *c = session_buffer_comments(buf, len);
	free(buf);
	return c;
}

/* Write S as YAML into a new buffer. */
enum session_status session_save_buffer(const struct session *s, char **out,
                                        size_t *len, struct session_error *err)
{
	return session_save_buffer_with(s, NULL, out, len, err);
}

/* Save S to PATH atomically. */
enum session_status session_save_file(const struct session *s, const char *path,
                                      struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	char *buf;
	size_t len;
	enum session_status st = session_save_buffer(s, &buf, &len, err);
	if (st != SESSION_OK) {
		snprintf(err->file, sizeof err->file, "%s", path);
		return st;
	}
	char why[sizeof err->message];
	int rc = atomic_write_file(path, buf, len, why, sizeof why);
	free(buf);
	if (rc != 0) {
		memset(err, 0, sizeof *err);
		snprintf(err->file, sizeof err->file, "%s", path);
		/* the message starts with the path already; keep the reason only */
		size_t pl = strlen(path);
		const char *msg = why;
		if (strncmp(msg, path, pl) == 0 && msg[pl] == ':')
			msg += pl + 2;
		snprintf(err->message, sizeof err->message, "%s", msg);
		return SESSION_CANT_WRITE;
	}
	return SESSION_OK;
}

/*
 * The demo: a panel filament lamp run dim from a 24 V rail through 680 Ohm.
 * The lamp is invented for the demo: rated 40 mA at 14 V, a power law with
 * exponent 0.55 (common practice for tungsten filaments).  It settles near
 * 6.37 V and 25.9 mA, where its differential resistance (about 446 Ohm) is
 * comparable to the 680 Ohm line: the voltage-from-line projections spiral
 * out slowly (g' about -1.52) and the voltage-from-device ones spiral in
 * (g' about -0.66), so a few steps in each order show both on one screen.
 * The path starts at 7 V, close enough that the diverging order takes
 * several visible steps before it leaves the lamp's curve.
 */
void session_demo(struct session *s)
{
	session_init(s);
	const struct model_type *lamp = model_find("power-law");
	if (lamp != NULL) {
		device_init(&s->device, lamp);
		s->device.p[model_param_index(lamp, "reference_voltage")] = 14.0;
		s->device.p[model_param_index(lamp, "reference_current")] = 0.04;
		s->device.p[model_param_index(lamp, "exponent")] = 0.55;
		source_spec_thevenin(&s->source, 24.0, 680.0);
	}
	s->solver.method = METHOD_PROJECTION;
	s->solver.order = ORDER_VOLTAGE_FROM_LINE;
	s->solver.start_v = 7.0;
}

/* Build the core problem from S. */
int session_problem(const struct session *s, struct problem *pb, char *err,
                    size_t errlen)
{
	char why[256];
	struct source_spec spec = s->source;
	if (s->network != NULL &&
	    session_network_spec(s->network, &spec, err, errlen) != 0)
		return -1;
	if (source_from_spec(&spec, &pb->src, why, sizeof why) != 0) {
		snprintf(err, errlen, "source.%s", why);
		return -1;
	}
	pb->dev = s->device;
	/* checked once here: the solves of this problem take it as it is */
	if (device_check(&pb->dev, why, sizeof why) != 0) {
		snprintf(err, errlen, "device.%s", why);
		return -1;
	}
	pb->net = s->network; /* borrowed: S outlives PB (problem.h) */
	pb->net_nset = 0;
	problem_bind(pb);
	return 0;
}
