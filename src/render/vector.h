/*
 * vector.h - the vector back end of a plot description (plot.h): the same
 * picture the character grid shows, drawn by cairo as SVG or PNG into
 * memory (no files: the caller writes the bytes where it wants them).
 *
 * Readable in print without colour: the load line is dashed, the device
 * curve solid, the older path dotted with an arrow at each step's middle,
 * the newest step thick with an arrowhead; each operating point's marker
 * shape says its stability (a filled disc stable, a crossed square
 * unstable, a diamond oscillating, a triangle unknown), and the points
 * are numbered with their verdict written beside them.
 *
 * An SVG names its data area and window in its <desc> element:
 *   "biasline plot area LEFT TOP RIGHT BOTTOM window XLO XHI YLO YHI
 *    log-x 0|1"
 * (area in px of the picture, window in data units, x in log10 units on a
 * log axis), so a reader can map a data point to its pixel.
 */
#ifndef BIASLINE_RENDER_VECTOR_H
#define BIASLINE_RENDER_VECTOR_H

#include <stddef.h>

#include "render/plot.h"

/* The picture formats. */
enum vector_format {
	VECTOR_SVG,
	VECTOR_PNG,
};

/* Default and limits of a picture's size, px. */
#define VECTOR_WIDTH 800
#define VECTOR_HEIGHT 560
#define VECTOR_MIN 240
#define VECTOR_MAX 4000

/* Where the data area lies in the picture (px from the top left). */
struct vector_frame {
	double width, height;
	double left, top, right, bottom;
};

/*
 * Draw D as FORMAT, W x H px (VECTOR_MIN..VECTOR_MAX), into a new buffer
 * *OUT of *LEN bytes (the caller frees it); FRAME (may be NULL) gets the
 * data area.  Returns 0, or -1 (no memory, a size out of range, or cairo
 * failed) with *OUT NULL.
 */
int render_vector(const struct plot_desc *d, enum vector_format format, int w,
                  int h, char **out, size_t *len, struct vector_frame *frame);

/*
 * Parse the name of a format ("svg", "png") into *F; returns 0 or -1.
 */
int vector_format_from_name(const char *name, enum vector_format *f);

#endif
