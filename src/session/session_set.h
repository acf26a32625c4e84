/*
 * session_set.h - change one value of a loaded session by its key, checked
 * the way the loader checks the file: `--set KEY=VALUE` on the command
 * line, and any front end that edits a value by key.
 *
 * Keys:
 *   vs, rs or is, rp        the source: the pair of the form the file
 *                           uses (paramref.h; the other pair is refused
 *                           with the keys the source has)
 *   a device parameter key  saturation_current, temperature, ...
 *   source.network.<part>   a part of a network source
 *   target.<key>            current, voltage, power, current_min, ...
 *                           (a new current, voltage or power target
 *                           replaces the old one)
 *   ratings.<key>           device_max_power, resistor_power, ...
 *   solver.<key>            method, order, tolerance, ...
 *   tolerances.<parameter>  a tolerance written as in the file: "5%", an
 *                           amount, "{min: 22, max: 26}",
 *                           "{plus_minus: 5%, distribution: normal}"
 * The value "none" takes an optional target or rating number away, or
 * removes a tolerance.
 * These are the keys of `sweep --param` and of the tolerances section,
 * and the dotted paths of the session file's own sections.
 *
 * A value is text with an optional SI prefix and unit ("27", "1k",
 * "4.7 kohm", "12 mA"); a unit of the wrong kind, a value outside the
 * key's range or one that leaves no valid problem is refused with the
 * file's own message, and the session is left as it was.
 */
#ifndef BIASLINE_SESSION_SET_H
#define BIASLINE_SESSION_SET_H

#include <stddef.h>

#include "session/session.h"

/* Most characters of a key. */
#define SESSION_SET_KEY_MAX 96

/* What became of a change (the values are the exit statuses it maps to). */
enum session_set_status {
	SESSION_SET_OK = 0,
	SESSION_SET_BAD_SYNTAX = 64, /* not KEY=VALUE */
	SESSION_SET_BAD_KEY = 64,    /* no such key in this session */
	SESSION_SET_BAD_VALUE = 65,  /* the value is not valid for the key */
};

/*
 * Split TEXT "KEY=VALUE" (spaces around either trimmed; the first '='
 * splits) into KEY (KEYLEN bytes) and *VALUE (a pointer into TEXT).
 * Returns SESSION_SET_OK, or SESSION_SET_BAD_SYNTAX with a message in ERR
 * (no '=', an empty key or value, a key too long).
 */
enum session_set_status session_set_split(const char *text, char *key,
                                          size_t keylen, const char **value,
                                          char *err, size_t errlen);

/*
 * Set KEY to the quantity written as VALUE in S.  Returns SESSION_SET_OK,
 * or an error status with a message naming the key in ERR (S unchanged).
 */
enum session_set_status session_set_text(struct session *s, const char *key,
                                         const char *value, char *err,
                                         size_t errlen);

/*
 * Set KEY to the number X (in the key's unit) in S, with the same checks.
 * Returns as session_set_text.
 */
enum session_set_status session_set_value(struct session *s, const char *key,
                                          double x, char *err, size_t errlen);

/* Both at once: TEXT is "KEY=VALUE". */
enum session_set_status session_set_assignment(struct session *s,
                                               const char *text, char *err,
                                               size_t errlen);

#endif
