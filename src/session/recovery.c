/*
 * recovery.c - recovery files under $XDG_STATE_HOME/biasline/ (XDG Base
 * Directory Specification 0.8, 2021: state data, default
 * $HOME/.local/state; a relative path in the variable is ignored).
 */
/* realpath() is an X/Open extension of POSIX */
#define _XOPEN_SOURCE 700

#include "session/recovery.h"

#include <dirent.h>
#include <errno.h>
#include <limits.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "session/atomic.h"
#include "session/ytree.h"

#ifndef PATH_MAX
#define PATH_MAX 4096
#endif

#define RECOVERY_LABEL "recovery of: "
#define RECOVERY_HEADER "# " RECOVERY_LABEL
#define RECOVERY_DEMO "(the built-in demo)"

/* The recovery folder. */
int recovery_dir(char *buf, size_t n, char *err, size_t errlen)
{
	const char *state = getenv("XDG_STATE_HOME");
	int r;
	if (state != NULL && state[0] == '/') {
		r = snprintf(buf, n, "%s/biasline", state);
	} else {
		const char *home = getenv("HOME");
		if (home == NULL || home[0] != '/') {
			snprintf(err, errlen, "no place for recovery files: set "
			         "XDG_STATE_HOME or HOME to an absolute path");
			return -1;
		}
		r = snprintf(buf, n, "%s/.local/state/biasline", home);
	}
	if (r < 0 || (size_t)r >= n) {
		snprintf(err, errlen, "the recovery folder's path is too long");
		return -1;
	}
	return 0;
}

/* The absolute form of PATH into BUF (resolved when it exists). */
static int recovery_absolute(const char *path, char *buf, size_t n)
{
	char real[PATH_MAX];
	int r;
	if (realpath(path, real) != NULL) {
		r = snprintf(buf, n, "%s", real);
	} else if (path[0] == '/') {
		r = snprintf(buf, n, "%s", path);
	} else {
		char cwd[PATH_MAX];
		if (getcwd(cwd, sizeof cwd) == NULL)
			return -1;
		r = snprintf(buf, n, "%s/%s", cwd, path);
	}
	return (r < 0 || (size_t)r >= n) ? -1 : 0;
}

/* 64-bit FNV-1a hash of TEXT (Fowler, Noll and Vo; public domain). */
static uint64_t recovery_hash(const char *text)
{
	uint64_t h = 0xcbf29ce484222325ULL;
	for (const unsigned char *p = (const unsigned char *)text; *p; p++) {
		h ^= *p;
		h *= 0x100000001b3ULL;
	}
	return h;
}

/* The recovery file for ORIGIN. */
int recovery_path(const char *origin, char *buf, size_t n, char *err,
                  size_t errlen)
{
	char dir[RECOVERY_PATH_MAX];
	if (recovery_dir(dir, sizeof dir, err, errlen) != 0)
		return -1;
	int r;
	if (origin == NULL) {
		r = snprintf(buf, n, "%s/demo.yaml", dir);
	} else {
		char abs[RECOVERY_PATH_MAX];
		if (recovery_absolute(origin, abs, sizeof abs) != 0) {
			snprintf(err, errlen, "%s: cannot make the path absolute", origin);
			return -1;
		}
		/* a readable stem from the base name, then the hash of the path */
		const char *base = strrchr(abs, '/');
		base = base != NULL ? base + 1 : abs;
		char stem[48];
		size_t k = 0;
		for (; base[k] != '\0' && k + 1 < sizeof stem; k++) {
			unsigned char c = (unsigned char)base[k];
			bool keep = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') ||
			            (c >= '0' && c <= '9') || c == '-' || c == '_' ||
			            (c == '.' && k > 0);
			stem[k] = keep ? (char)c : '_';
		}
		stem[k] = '\0';
		r = snprintf(buf, n, "%s/%s-%016llx.yaml", dir, stem,
		             (unsigned long long)recovery_hash(abs));
	}
	if (r < 0 || (size_t)r >= n) {
		snprintf(err, errlen, "the recovery file's path is too long");
		return -1;
	}
	return 0;
}

/* Write S as the recovery file for ORIGIN. */
enum session_status recovery_save(const struct session *s, const char *origin,
                                  struct session_error *err)
{
	struct session_error scratch;
	if (err == NULL)
		err = &scratch;
	memset(err, 0, sizeof *err);
	char path[RECOVERY_PATH_MAX], dir[RECOVERY_PATH_MAX];
	char why[sizeof err->message];
	if (recovery_dir(dir, sizeof dir, why, sizeof why) != 0 ||
	    recovery_path(origin, path, sizeof path, why, sizeof why) != 0 ||
	    atomic_make_dirs(dir, 0700, why, sizeof why) != 0) {
		ytree_error_at(err, "", 0, 0, "", "%s", why);
		return SESSION_CANT_WRITE;
	}
	/* the origin goes into a comment line: no line breaks in it */
	char line[RECOVERY_PATH_MAX + 32];
	char abs[RECOVERY_PATH_MAX];
	if (origin == NULL || recovery_absolute(origin, abs, sizeof abs) != 0)
		snprintf(abs, sizeof abs, "%s", origin == NULL ? RECOVERY_DEMO : origin);
	snprintf(line, sizeof line, "%s%s", RECOVERY_LABEL, abs);
	for (char *p = line; *p; p++)
		if (*p == '\n' || *p == '\r')
			*p = '?';
	char *buf;
	size_t len;
	enum session_status st = session_save_buffer_with(s, line, &buf, &len, err);
	if (st != SESSION_OK)
		return st;
	int rc = atomic_write_file(path, buf, len, why, sizeof why);
	free(buf);
	if (rc != 0) {
		ytree_error_at(err, path, 0, 0, "", "%s", why);
		return SESSION_CANT_WRITE;
	}
	return SESSION_OK;
}

/* Look for the recovery file of ORIGIN. */
int recovery_find(const char *origin, char *buf, size_t n)
{
	char err[256];
	if (recovery_path(origin, buf, n, err, sizeof err) != 0)
		return -1;
	struct stat st;
	return stat(buf, &st) == 0 && S_ISREG(st.st_mode) ? 1 : 0;
}

/* True when A is later than B. */
static bool recovery_later(const struct timespec *a, const struct timespec *b)
{
	return a->tv_sec != b->tv_sec ? a->tv_sec > b->tv_sec
	                              : a->tv_nsec > b->tv_nsec;
}

/* Compare the recovery file of ORIGIN with ORIGIN. */
enum recovery_state recovery_check(const char *origin, char *buf, size_t n,
                                   time_t *mtime)
{
	char err[256];
	if (recovery_path(origin, buf, n, err, sizeof err) != 0)
		return RECOVERY_UNKNOWN;
	struct stat rs, os;
	if (stat(buf, &rs) != 0 || !S_ISREG(rs.st_mode))
		return RECOVERY_NONE;
	if (mtime != NULL)
		*mtime = rs.st_mtime;
	if (origin == NULL || stat(origin, &os) != 0)
		return RECOVERY_NEWER;
	return recovery_later(&rs.st_mtim, &os.st_mtim) ? RECOVERY_NEWER
	                                                : RECOVERY_OLDER;
}

/* Rename the recovery file of ORIGIN out of the way. */
int recovery_set_aside(const char *origin, char *newpath, size_t n, char *err,
                       size_t errlen)
{
	char path[RECOVERY_PATH_MAX];
	if (recovery_path(origin, path, sizeof path, err, errlen) != 0)
		return -1;
	struct stat st;
	if (stat(path, &st) != 0) {
		snprintf(err, errlen, "%s: cannot set the recovery file aside: %s",
		         path, strerror(errno));
		return -1;
	}
	char stamp[32];
	struct tm tm;
	if (localtime_r(&st.st_mtime, &tm) == NULL ||
	    strftime(stamp, sizeof stamp, "%Y%m%d-%H%M%S", &tm) == 0)
		snprintf(stamp, sizeof stamp, "%lld", (long long)st.st_mtime);
	size_t stem = strlen(path) - strlen(".yaml"); /* recovery_path ends so */
	for (int k = 1; k < 1000; k++) {
		char num[16] = "";
		if (k > 1)
			snprintf(num, sizeof num, "-%d", k);
		int r = snprintf(newpath, n, "%.*s.aside-%s%s.yaml", (int)stem, path,
		                 stamp, num);
		if (r < 0 || (size_t)r >= n) {
			snprintf(err, errlen, "the recovery file's path is too long");
			return -1;
		}
		struct stat taken;
		if (lstat(newpath, &taken) == 0)
			continue;
		if (rename(path, newpath) != 0) {
			snprintf(err, errlen, "%s: cannot set the recovery file aside: %s",
			         path, strerror(errno));
			return -1;
		}
		return 0;
	}
	snprintf(err, errlen, "%s: cannot set the recovery file aside: too many "
	         "set-aside copies", path);
	return -1;
}

/* Read the origin from the second line of recovery file PATH into E. */
static void recovery_read_origin(const char *path, struct recovery_entry *e)
{
	e->origin[0] = '\0';
	FILE *f = fopen(path, "r");
	if (f == NULL)
		return;
	char line[RECOVERY_PATH_MAX + 64];
	for (int k = 0; k < 2 && fgets(line, sizeof line, f) != NULL; k++) {
		size_t hl = strlen(RECOVERY_HEADER);
		if (strncmp(line, RECOVERY_HEADER, hl) != 0)
			continue;
		line[strcspn(line, "\n")] = '\0';
		size_t ol = strlen(line + hl);
		if (strcmp(line + hl, RECOVERY_DEMO) != 0 && ol < sizeof e->origin)
			memcpy(e->origin, line + hl, ol + 1);
	}
	fclose(f);
}

/* Newest first. */
static int recovery_by_time(const void *a, const void *b)
{
	const struct recovery_entry *x = a, *y = b;
	if (x->mtime != y->mtime)
		return x->mtime < y->mtime ? 1 : -1;
	return strcmp(x->path, y->path);
}

/* List every recovery file. */
int recovery_list(struct recovery_entry **out, size_t *n, char *err,
                  size_t errlen)
{
	*out = NULL;
	*n = 0;
	char dir[RECOVERY_PATH_MAX];
	if (recovery_dir(dir, sizeof dir, err, errlen) != 0)
		return -1;
	DIR *d = opendir(dir);
	if (d == NULL) {
		if (errno == ENOENT)
			return 0;
		snprintf(err, errlen, "%s: cannot list recovery files: %s", dir,
		         strerror(errno));
		return -1;
	}
	struct recovery_entry *list = NULL;
	size_t count = 0, cap = 0;
	struct dirent *de;
	while ((de = readdir(d)) != NULL) {
		size_t len = strlen(de->d_name);
		if (de->d_name[0] == '.' || len < 6 ||
		    strcmp(de->d_name + len - 5, ".yaml") != 0)
			continue;
		if (count == cap) {
			size_t nc = cap ? 2 * cap : 8;
			struct recovery_entry *l = realloc(list, nc * sizeof *l);
			if (l == NULL) {
				free(list);
				closedir(d);
				snprintf(err, errlen, "out of memory");
				return -1;
			}
			list = l;
			cap = nc;
		}
		struct recovery_entry *e = &list[count];
		int r = snprintf(e->path, sizeof e->path, "%s/%s", dir, de->d_name);
		struct stat st;
		if (r < 0 || (size_t)r >= sizeof e->path || stat(e->path, &st) != 0 ||
		    !S_ISREG(st.st_mode))
			continue;
		e->mtime = st.st_mtime;
		recovery_read_origin(e->path, e);
		count++;
	}
	closedir(d);
	if (count > 1)
		qsort(list, count, sizeof *list, recovery_by_time);
	*out = list;
	*n = count;
	return 0;
}

/* Free a list. */
void recovery_list_free(struct recovery_entry *list)
{
	free(list);
}

/* Remove the recovery file of ORIGIN. */
int recovery_remove(const char *origin, char *err, size_t errlen)
{
	char path[RECOVERY_PATH_MAX];
	if (recovery_path(origin, path, sizeof path, err, errlen) != 0)
		return -1;
	if (unlink(path) != 0 && errno != ENOENT) {
		snprintf(err, errlen, "%s: cannot remove the recovery file: %s", path,
		         strerror(errno));
		return -1;
	}
	return 0;
}
