/*
 * grid.c - the cell grid the plots draw into: allocation, access, a row
 * as UTF-8 text, and each role's mark and priority.
 *
 * Drawing order decides what shows where marks overlap: each role has a
 * priority and a cell only takes a mark of equal or higher priority, so the
 * operating point is never hidden by the path, nor the path by a curve.
 */
#include <stdlib.h>
#include <string.h>

#include "render/render_int.h"

/* Draw priority of each role (higher wins). */
static const unsigned char render_priority[ROLE_COUNT] = {
	[ROLE_NONE] = 0,   [ROLE_AXIS] = 1,   [ROLE_LABEL] = 1,
	[ROLE_LINE] = 2,   [ROLE_DEVICE] = 3, [ROLE_PATH] = 4,
	[ROLE_NEWEST] = 5, [ROLE_START] = 6,  [ROLE_POINT] = 7,
	[ROLE_LEGEND] = 1,
};

/* Marks per role: ASCII, then Unicode. */
static const uint32_t render_marks[ROLE_COUNT][2] = {
	[ROLE_NONE] = { ' ', ' ' },
	[ROLE_AXIS] = { '|', 0x2502 },      /* │ */
	[ROLE_LABEL] = { 0, 0 },
	[ROLE_LINE] = { '#', 0x25AA },      /* ▪ */
	[ROLE_DEVICE] = { '*', 0x25CF },    /* ● */
	[ROLE_PATH] = { '.', 0x00B7 },      /* · */
	[ROLE_NEWEST] = { '=', 0x2501 },    /* ━ */
	[ROLE_START] = { 'o', 0x25CB },     /* ○ */
	[ROLE_POINT] = { '@', 0x25C9 },     /* ◉ */
	[ROLE_LEGEND] = { 0, 0 },
};

/* Words for each role in the legend. */
static const char *const render_role_names[ROLE_COUNT] = {
	[ROLE_NONE] = "",
	[ROLE_AXIS] = "axis",
	[ROLE_LABEL] = "label",
	[ROLE_LINE] = "load line",
	[ROLE_DEVICE] = "device",
	[ROLE_PATH] = "path",
	[ROLE_NEWEST] = "newest step",
	[ROLE_START] = "start",
	[ROLE_POINT] = "op. point",
	[ROLE_LEGEND] = "legend",
};

/* Allocate a ROWS x COLS grid of blanks. */
int grid_init(struct grid *g, int rows, int cols)
{
	g->rows = 0;
	g->cols = 0;
	g->cells = NULL;
	return grid_resize(g, rows, cols);
}

/* Free G's cells. */
void grid_fini(struct grid *g)
{
	free(g->cells);
	g->cells = NULL;
	g->rows = 0;
	g->cols = 0;
}

/* Resize G to ROWS x COLS and blank it. */
int grid_resize(struct grid *g, int rows, int cols)
{
	if (rows < 0 || cols < 0)
		return -1;
	size_t n = (size_t)rows * (size_t)cols;
	if (n != (size_t)g->rows * (size_t)g->cols || g->cells == NULL) {
		struct cell *c = malloc(n > 0 ? n * sizeof *c : sizeof *c);
		if (c == NULL)
			return -1;
		free(g->cells);
		g->cells = c;
	}
	g->rows = rows;
	g->cols = cols;
	grid_clear(g);
	return 0;
}

/* Blank every cell. */
void grid_clear(struct grid *g)
{
	size_t n = (size_t)g->rows * (size_t)g->cols;
	for (size_t k = 0; k < n; k++) {
		g->cells[k].ch = ' ';
		g->cells[k].role = ROLE_NONE;
	}
}

/* The cell at ROW, COL, or NULL outside. */
const struct cell *grid_at(const struct grid *g, int row, int col)
{
	if (row < 0 || col < 0 || row >= g->rows || col >= g->cols)
		return NULL;
	return &g->cells[(size_t)row * (size_t)g->cols + (size_t)col];
}

/* Write row ROW of G as UTF-8, trailing blanks removed. */
size_t grid_row_text(const struct grid *g, int row, char *buf, size_t n)
{
	if (n == 0)
		return 0;
	buf[0] = '\0';
	if (row < 0 || row >= g->rows)
		return 0;
	int last = g->cols - 1;
	while (last >= 0 && grid_at(g, row, last)->ch == ' ')
		last--;
	size_t len = 0;
	for (int c = 0; c <= last; c++) {
		char enc[4];
		size_t k = render_utf8_encode(grid_at(g, row, c)->ch, enc);
		if (len + k + 1 > n)
			break;
		memcpy(buf + len, enc, k);
		len += k;
	}
	buf[len] = '\0';
	return len;
}

/* The mark for ROLE. */
uint32_t render_mark(enum cell_role role, bool unicode)
{
	if ((int)role < 0 || role >= ROLE_COUNT)
		return 0;
	return render_marks[role][unicode ? 1 : 0];
}

/* Legend words for ROLE. */
const char *render_role_name(enum cell_role role)
{
	if ((int)role < 0 || role >= ROLE_COUNT)
		return "";
	return render_role_names[role];
}

/* Put CH with ROLE at ROW, COL if it is inside and ROLE's priority allows. */
void render_put(struct grid *g, int row, int col, uint32_t ch,
                enum cell_role role)
{
	if (row < 0 || col < 0 || row >= g->rows || col >= g->cols)
		return;
	struct cell *c = &g->cells[(size_t)row * (size_t)g->cols + (size_t)col];
	if (render_priority[role] < render_priority[c->role])
		return;
	c->ch = ch;
	c->role = (unsigned char)role;
}

/* Write UTF-8 TEXT at ROW from COL with ROLE, clipped to the grid. */
void render_text(struct grid *g, int row, int col, const char *text,
                 enum cell_role role)
{
	const char *s = text;
	while (*s != '\0') {
		uint32_t cp = render_utf8_next(&s);
		render_put(g, row, col++, cp, role);
	}
}

/* Write a one-line message MSG into G after blanking it. */
void render_message(struct grid *g, const char *msg)
{
	grid_clear(g);
	if (g->rows > 0)
		render_text(g, 0, 0, msg, ROLE_LABEL);
}
