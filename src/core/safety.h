/*
 * safety.h - the cautions biasline shows when a case can hurt someone:
 * a source voltage above the extra-low-voltage range, or a part that
 * dissipates enough to burn.  biasline defers to local codes and licensed
 * practice; these messages say so.
 */
#ifndef BIASLINE_SAFETY_H
#define BIASLINE_SAFETY_H

#include <stddef.h>

#include "problem.h"

/*
 * Extra-low voltage for ripple-free DC: 120 V (IEC 61140:2016, table of
 * voltage bands, band I; from memory).  Touch-safe SELV circuits are
 * commonly held to 60 V DC (IEC 62368-1 ES1/ES2 boundary; from memory):
 * the caution starts there.
 */
#define SAFETY_DC_VOLTAGE 60.0
/* Dissipation above which a part can burn a finger (common practice). */
#define SAFETY_HOT_POWER 2.0
/*
 * Junction temperature above which a self-heated part's case and heat
 * sink can burn on contact (common practice: metal surfaces above about
 * 60 degC; the thermistor's caution uses the same figure).
 */
#define SAFETY_HOT_SURFACE_C 60.0

/* The cautions that apply. */
enum safety_flags {
	SAFETY_HIGH_VOLTAGE = 1 << 0,
	SAFETY_HOT_DEVICE = 1 << 1,
	SAFETY_HOT_RESISTOR = 1 << 2,
	SAFETY_HOT_SURFACE = 1 << 3,   /* a self-heated junction above 60 degC */
};

/*
 * Which cautions apply to PB at the point (V, I): a bit set of
 * safety_flags.  The open-circuit voltage counts even when the point's
 * voltage is low, because it is what appears when the part is removed.
 * The device's power is the heat it turns out (a transistor's collector
 * dissipation: model.h, device_dissipation); a device that heats itself
 * (thermal.h) is a hot surface when its junction passes
 * SAFETY_HOT_SURFACE_C.
 */
unsigned safety_check(const struct problem *pb, double v, double i);

/* One line of caution text for FLAGS into BUF ("" when FLAGS is 0). */
void safety_message(unsigned flags, char *buf, size_t n);

#endif
