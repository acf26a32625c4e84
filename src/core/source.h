/*
 * source.h - the linear part of the circuit reduced to a two-terminal source.
 *
 * Input is either Thevenin (VS behind a series RS) or Norton (IS with a
 * parallel RP).  Internally both are one form, the load line
 *
 *     V + r * I = voc          when r is finite (r = 0: ideal voltage source)
 *     I = isc                  when r is infinite (ideal current source)
 *
 * where I is the current delivered into the device and V the device voltage.
 * Nothing here divides by a resistance that may be zero.
 */
#ifndef BIASLINE_SOURCE_H
#define BIASLINE_SOURCE_H

#include <stdbool.h>
#include <stddef.h>

/* How the user stated the source (kept so a saved file reads as written). */
enum source_form {
	SOURCE_THEVENIN, /* vs, rs */
	SOURCE_NORTON,   /* is, rp (rp may be infinite: ideal current source) */
};

/* The source as the user gave it. */
struct source_spec {
	enum source_form form;
	double vs;   /* Thevenin open-circuit voltage, V */
	double rs;   /* Thevenin series resistance, ohm, >= 0 */
	double is;   /* Norton short-circuit current, A */
	double rp;   /* Norton parallel resistance, ohm, > 0 or INFINITY */
};

/*
 * The internal load-line form; see the top of this file.  FORM records how
 * the user stated the source, which decides the keys it has for sweeps,
 * sensitivities and tolerances (vs, rs or is, rp: paramref.h); a source
 * built by hand and zeroed is Thevenin.
 */
struct source {
	double voc;  /* open-circuit voltage (finite unless r is infinite) */
	double isc;  /* short-circuit current (finite unless r == 0) */
	double r;    /* source resistance, 0 <= r <= INFINITY */
	enum source_form form;
};

/* Fill SPEC with a Thevenin source. */
void source_spec_thevenin(struct source_spec *spec, double vs, double rs);

/* Fill SPEC with a Norton source (RP = INFINITY for an ideal current source). */
void source_spec_norton(struct source_spec *spec, double is, double rp);

/*
 * Check SPEC and reduce it to the internal form.  Returns 0, or -1 with a
 * message in ERR naming the offending quantity (non-finite values, a
 * negative resistance, RP = 0).
 */
int source_from_spec(const struct source_spec *spec, struct source *out,
                     char *err, size_t errlen);

/* True when the load line is vertical (ideal voltage source, r == 0). */
bool source_is_ideal_voltage(const struct source *s);

/* True when the load line is horizontal (ideal current source). */
bool source_is_ideal_current(const struct source *s);

/* Current on the load line at voltage V; NaN when the line is vertical. */
double source_line_current(const struct source *s, double v);

/* Voltage on the load line at current I; NaN when the line is horizontal. */
double source_line_voltage(const struct source *s, double i);

/*
 * Signed distance of (V, I) from the load line in the line's natural unit:
 * V + r*I - voc (volts) for finite r, I - isc (amperes) otherwise.
 */
double source_line_residual(const struct source *s, double v, double i);

#endif
