/*
 * paramref.h - a parameter of a problem named by its session key, so that
 * sweeps, sensitivities and tolerances can vary any of them alike:
 *
 *   vs  the source's open-circuit voltage (RS kept)
 *   rs  the source's series resistance (VS kept)
 *   is  the source's short-circuit current (RP kept)
 *   rp  the source's parallel resistance (IS kept)
 *   any key of the device model's parameter table ("temperature", ...;
 *       not "temperature" when the device heats itself, thermal.h: the
 *       junction temperature is then solved, and the ambient varies)
 *   source.network.<part name>  a part's value, when the source is a
 *       network (problem.h: pb->net); the network is reduced again with
 *       the new value
 *
 * A source has the keys of the form the user wrote it in (source.h:
 * src.form): vs and rs for a Thevenin source, is and rp for a Norton one
 * (only is for an ideal current source, whose rp is infinite), so that
 * every sensitivity, sweep and tolerance speaks of the values in the
 * user's file: the sensitivity to rp holds is fixed, not vs.  A key of the
 * other form is refused with the keys the source has.  For a network
 * source vs, rs, is and rp are all refused: they stand for the network's
 * equivalent, and what an engineer varies is one of its parts.
 */
#ifndef BIASLINE_PARAMREF_H
#define BIASLINE_PARAMREF_H

#include <stdbool.h>
#include <stddef.h>

#include "problem.h"
#include "quantity.h"

/* Which part of the problem a reference points at. */
enum paramref_kind {
	PARAMREF_VS,
	PARAMREF_RS,
	PARAMREF_IS,
	PARAMREF_RP,
	PARAMREF_DEVICE,
	PARAMREF_NETWORK,
};

/* The key path prefix of a network part's value. */
#define PARAMREF_NETWORK_PREFIX "source.network."

/* Room for a key: the prefix and a part name of up to 48 bytes. */
#define PARAMREF_KEY_MAX 64

/* Most network parts paramref_all lists (the first ones). */
#define PARAMREF_MAX_PARTS 32

/* Most references paramref_all can return: size a buffer for it so. */
#define PARAMREF_MAX (4 + MODEL_MAX_PARAMS + PARAMREF_MAX_PARTS)

/* A parameter of a problem. */
struct paramref {
	enum paramref_kind kind;
	int index;              /* the device parameter's index (DEVICE) or
	                           the part's index (NETWORK); else -1 */
	char key[PARAMREF_KEY_MAX]; /* "source.network.<name>" (NETWORK only) */
};

/*
 * Look KEY up for PB into *OUT.  Returns 0, or -1 with a message in ERR
 * (unknown key, listing the valid ones; or a source key that PB's source
 * cannot take).
 */
int paramref_find(const struct problem *pb, const char *key,
                  struct paramref *out, char *err, size_t errlen);

/* The key of R ("vs", "saturation_current", "source.network.r2", ...). */
const char *paramref_key(const struct problem *pb, const struct paramref *r);

/* The unit of R's value. */
enum qty_kind paramref_unit(const struct problem *pb, const struct paramref *r);

/* R's value in PB. */
double paramref_get(const struct problem *pb, const struct paramref *r);

/*
 * Whether X is a valid value of R (finite, inside the model's range for a
 * device parameter, a resistance >= 0 or > 0 as the key needs).  Returns
 * 0, or -1 with a message in ERR (may be NULL).
 */
int paramref_check(const struct problem *pb, const struct paramref *r,
                   double x, char *err, size_t errlen);

/* Whether X is inside MP's table range (no message; for loops). */
bool paramref_in_range(const struct model_param *mp, double x);

/*
 * Set R to X in PB (after paramref_check); returns 0 or -1.  A device
 * parameter is checked with the whole device here (device_check: a value
 * that makes it invalid leaves it unchecked, and a solve then refuses it
 * with the key), so the solves that follow need not check it again.
 */
int paramref_set(struct problem *pb, const struct paramref *r, double x);

struct network;

/*
 * Set every R[k] to X[k] (after paramref_check), K < N: as paramref_set
 * each, but the parts of a network source are noted together and the
 * network reduced once for all of them, and the device is checked once.
 * SCRATCH, when not NULL, is a copy of PB's network (network_copy) that
 * the caller keeps for repeated calls on problems copied from PB: it is
 * overwritten with the values, so no copy is made per call.  Returns 0,
 * or -1 (PB may then be half set).
 */
int paramref_set_all(struct problem *pb, const struct paramref *r,
                     const double *x, size_t n, struct network *scratch);

/*
 * Every parameter PB can vary: vs and rs (when the resistance is finite),
 * is (when it is infinite), or for a network source its first
 * PARAMREF_MAX_PARTS parts instead; then the device's.  Writes at most MAX and
 * returns how many.
 */
size_t paramref_all(const struct problem *pb, struct paramref *out,
                    size_t max);

#endif
