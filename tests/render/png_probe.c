/*
 * png_probe.c - read pixels of a PNG for the picture tests (cairo's PNG
 * reader; transparent pixels are taken over white).
 *
 *   png_probe near FILE X Y R RRGGBB [TOL]
 *       exit 0 when some pixel within R pixels (each way) of (X, Y) has
 *       the colour RRGGBB within TOL (default 40) on each channel; prints
 *       the nearest such pixel, or the pixel at (X, Y) when none.
 *   png_probe blank FILE
 *       prints the size, the share of pixels that are not white and the
 *       number of distinct colours; exit 0 when the picture is not blank
 *       (at least 0.5 % of its pixels not white, at least 4 colours).
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cairo.h>

/* The pixel at X, Y of S as 0xRRGGBB over white. */
static unsigned probe_pixel(cairo_surface_t *s, int x, int y)
{
	const unsigned char *d = cairo_image_surface_get_data(s);
	int stride = cairo_image_surface_get_stride(s);
	uint32_t p;
	memcpy(&p, d + (size_t)y * (size_t)stride + 4 * (size_t)x, 4);
	unsigned a = p >> 24, r = (p >> 16) & 255, g = (p >> 8) & 255, b = p & 255;
	if (cairo_image_surface_get_format(s) != CAIRO_FORMAT_ARGB32)
		a = 255;
	/* Premultiplied: over white adds (255 - a). */
	r += 255 - a;
	g += 255 - a;
	b += 255 - a;
	return (r > 255 ? 255 : r) << 16 | (g > 255 ? 255 : g) << 8 |
	       (b > 255 ? 255 : b);
}

/* True when A and B differ by at most TOL on each channel. */
static int probe_close(unsigned a, unsigned b, int tol)
{
	for (int sh = 0; sh <= 16; sh += 8) {
		int d = (int)((a >> sh) & 255) - (int)((b >> sh) & 255);
		if (abs(d) > tol)
			return 0;
	}
	return 1;
}

int main(int argc, char **argv)
{
	if (argc < 3) {
		fprintf(stderr, "usage: png_probe near FILE X Y R RRGGBB [TOL] | "
		        "png_probe blank FILE\n");
		return 2;
	}
	cairo_surface_t *s = cairo_image_surface_create_from_png(argv[2]);
	if (cairo_surface_status(s) != CAIRO_STATUS_SUCCESS) {
		fprintf(stderr, "png_probe: %s: not a readable PNG\n", argv[2]);
		cairo_surface_destroy(s);
		return 2;
	}
	cairo_surface_flush(s);
	int w = cairo_image_surface_get_width(s), h = cairo_image_surface_get_height(s);
	int rc = 1;
	if (strcmp(argv[1], "blank") == 0) {
		size_t nonwhite = 0, ncol = 0, cap = 4096;
		unsigned *seen = calloc(cap, sizeof *seen);
		for (int y = 0; y < h; y++)
			for (int x = 0; x < w; x++) {
				unsigned p = probe_pixel(s, x, y);
				if (p != 0xFFFFFF)
					nonwhite++;
				size_t k;
				for (k = 0; k < ncol; k++)
					if (seen[k] == p)
						break;
				if (k == ncol && ncol < cap && seen != NULL)
					seen[ncol++] = p;
			}
		free(seen);
		double share = (double)nonwhite / ((double)w * (double)h);
		printf("%dx%d, %.2f %% not white, %zu colours\n", w, h, 100.0 * share,
		       ncol);
		rc = share >= 0.005 && ncol >= 4 ? 0 : 1;
	} else if (strcmp(argv[1], "near") == 0 && argc >= 7) {
		double fx = atof(argv[3]), fy = atof(argv[4]);
		int r = atoi(argv[5]);
		unsigned want = (unsigned)strtoul(argv[6], NULL, 16);
		int tol = argc > 7 ? atoi(argv[7]) : 40;
		int cx = (int)floor(fx), cy = (int)floor(fy);
		int best = -1, bx = 0, by = 0;
		for (int y = cy - r; y <= cy + r; y++)
			for (int x = cx - r; x <= cx + r; x++) {
				if (x < 0 || y < 0 || x >= w || y >= h)
					continue;
				if (!probe_close(probe_pixel(s, x, y), want, tol))
					continue;
				int d = abs(x - cx) > abs(y - cy) ? abs(x - cx) : abs(y - cy);
				if (best < 0 || d < best) {
					best = d;
					bx = x;
					by = y;
				}
			}
		if (best >= 0) {
			printf("%06X at (%d, %d), %d px from (%d, %d)\n",
			       probe_pixel(s, bx, by), bx, by, best, cx, cy);
			rc = 0;
		} else {
			unsigned c = cx >= 0 && cy >= 0 && cx < w && cy < h
			             ? probe_pixel(s, cx, cy) : 0;
			printf("no %06X within %d px of (%d, %d); the pixel there is "
			       "%06X\n", want, r, cx, cy, c);
		}
	} else {
		fprintf(stderr, "png_probe: bad arguments\n");
		rc = 2;
	}
	cairo_surface_destroy(s);
	return rc;
}
