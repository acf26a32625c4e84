/*
 * section_analysis.h - the target, ratings and tolerances sections of a
 * session file (their keys are described in session/analysis.h).
 */
#ifndef BIASLINE_SECTION_ANALYSIS_H
#define BIASLINE_SECTION_ANALYSIS_H

#include "session/section.h"

extern const struct session_section section_target;
extern const struct session_section section_ratings;
extern const struct session_section section_tolerances;

/* The root's present() test for tolerances: written when there are any. */
bool section_tolerances_present(const struct session_field *f,
                                const struct session *s);

#endif
