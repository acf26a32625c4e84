/*
 * text.c - UTF-8 text: decoding, encoding, width in terminal cells
 * (wcwidth, which follows the locale: a character it does not know counts
 * one cell) and word wrapping to a width.
 */
/* wcwidth is X/Open. */
#ifndef _XOPEN_SOURCE
#define _XOPEN_SOURCE 700
#endif
#include <wchar.h>

#include "render/render_int.h"

/* Encode code point CP as UTF-8 into OUT (4 bytes room); returns length. */
size_t render_utf8_encode(uint32_t cp, char *out)
{
	if (cp < 0x80) {
		out[0] = (char)cp;
		return 1;
	}
	if (cp < 0x800) {
		out[0] = (char)(0xC0 | (cp >> 6));
		out[1] = (char)(0x80 | (cp & 0x3F));
		return 2;
	}
	if (cp < 0x10000) {
		out[0] = (char)(0xE0 | (cp >> 12));
		out[1] = (char)(0x80 | ((cp >> 6) & 0x3F));
		out[2] = (char)(0x80 | (cp & 0x3F));
		return 3;
	}
	out[0] = (char)(0xF0 | (cp >> 18));
	out[1] = (char)(0x80 | ((cp >> 12) & 0x3F));
	out[2] = (char)(0x80 | ((cp >> 6) & 0x3F));
	out[3] = (char)(0x80 | (cp & 0x3F));
	return 4;
}

/* Decode one UTF-8 code point at *S, advancing *S ('?' for bad bytes). */
uint32_t render_utf8_next(const char **s)
{
	const unsigned char *p = (const unsigned char *)*s;
	uint32_t cp;
	size_t len;
	if (p[0] < 0x80) {
		cp = p[0];
		len = 1;
	} else if ((p[0] & 0xE0) == 0xC0) {
		cp = p[0] & 0x1F;
		len = 2;
	} else if ((p[0] & 0xF0) == 0xE0) {
		cp = p[0] & 0x0F;
		len = 3;
	} else if ((p[0] & 0xF8) == 0xF0) {
		cp = p[0] & 0x07;
		len = 4;
	} else {
		*s += 1;
		return '?';
	}
	for (size_t k = 1; k < len; k++) {
		if ((p[k] & 0xC0) != 0x80) {
			*s += k;
			return '?';
		}
		cp = (cp << 6) | (p[k] & 0x3F);
	}
	*s += len;
	return cp;
}

/* Cells code point CP takes: wcwidth's answer, one where it has none. */
static int render_cp_width(uint32_t cp)
{
	int w = wcwidth((wchar_t)cp);
	return w >= 0 ? w : 1;
}

/* Cells the UTF-8 string S takes on a terminal. */
int render_text_width(const char *s)
{
	int n = 0;
	while (*s != '\0')
		n += render_cp_width(render_utf8_next(&s));
	return n;
}

/* Break TEXT into lines of at most WIDTH cells at blanks. */
size_t render_wrap(const char *text, int width, struct render_span *out,
                   size_t max)
{
	if (text == NULL || width < 1)
		return 0;
	size_t n = 0;
	const char *s = text;
	for (;;) {
		while (*s == ' ' || *s == '\n')
			s++;
		if (*s == '\0')
			break;
		/* Walk up to WIDTH cells, remembering the last blank seen. */
		const char *p = s, *blank = NULL, *stop = NULL;
		int cells = 0;
		while (*p != '\0' && *p != '\n') {
			const char *q = p;
			int cw = render_cp_width(render_utf8_next(&q));
			if (cells + cw > width && cells > 0)
				break;
			if (*p == ' ')
				blank = p;
			p = q;
			cells += cw;
		}
		if (*p == '\0' || *p == ' ' || *p == '\n')
			stop = p;                 /* the rest fits, or ends at a blank */
		else if (blank != NULL)
			stop = blank;             /* break at the last blank */
		else
			stop = p;                 /* one long word: cut it */
		const char *end = stop;
		while (end > s && end[-1] == ' ')
			end--;
		if (n < max && out != NULL)
			out[n] = (struct render_span){ (size_t)(s - text),
			                               (size_t)(end - s) };
		n++;
		s = stop;
	}
	return n;
}
