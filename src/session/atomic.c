/*
 * atomic.c - atomic file replacement (temporary file + fsync + rename +
 * folder fsync), so a crash or a full disk never leaves a half-written
 * session where the old one was.
 */
/* realpath() is an X/Open extension of POSIX */
#define _XOPEN_SOURCE 700

#include "session/atomic.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>
#include <time.h>
#include <unistd.h>

#ifndef PATH_MAX
#define PATH_MAX 4096
#endif

/* Split PATH into its folder (".", when none) and base name. */
static int atomic_split(const char *path, char *dir, size_t dn, char *base,
                        size_t bn)
{
	const char *slash = strrchr(path, '/');
	int r;
	if (slash == NULL) {
		r = snprintf(dir, dn, ".");
		if (r < 0 || (size_t)r >= dn)
			return -1;
		r = snprintf(base, bn, "%s", path);
	} else {
		size_t len = (size_t)(slash - path);
		if (len == 0)
			len = 1; /* the root folder */
		if (len >= dn)
			return -1;
		memcpy(dir, path, len);
		dir[len] = '\0';
		r = snprintf(base, bn, "%s", slash + 1);
	}
	return (r < 0 || (size_t)r >= bn) ? -1 : 0;
}

/* Write all LEN bytes of DATA to FD; returns 0 or -1 with errno set. */
static int atomic_write_all(int fd, const char *data, size_t len)
{
	while (len > 0) {
		ssize_t w = write(fd, data, len);
		if (w < 0) {
			if (errno == EINTR)
				continue;
			return -1;
		}
		data += w;
		len -= (size_t)w;
	}
	return 0;
}

/* The permission bits a new file gets: 0666 less the umask. */
static mode_t atomic_new_file_mode(void)
{
	mode_t mask = umask(022);
	umask(mask);
	return 0666 & ~mask;
}

/*
 * Whether the existing file TARGET (status ST) may be replaced: not when
 * it is read-only to the user.  Root passes every permission check, so for
 * root a file without any write permission bit counts as read-only, the
 * way careful tools treat it.  Returns 0, or -1 with the reason in WHY.
 */
static int atomic_writable(const char *target, const struct stat *st,
                           char *why, size_t n)
{
	if (geteuid() == 0) {
		if ((st->st_mode & 0222) == 0) {
			snprintf(why, n, "the file is read-only (mode %04o); not "
			         "replacing it", (unsigned)(st->st_mode & 07777));
			return -1;
		}
		return 0;
	}
	if (faccessat(AT_FDCWD, target, W_OK, AT_EACCESS) != 0) {
		int e = errno;
		if (e == EACCES || e == EPERM || e == EROFS) {
			snprintf(why, n, "the file is read-only for you (%s); not "
			         "replacing it", strerror(e));
			return -1;
		}
	}
	return 0;
}

/*
 * The temporary file of a save of BASE is ".BASE" ATOMIC_TMP_MARK and six
 * characters from mkstemp; BASE is cut to ATOMIC_TMP_BASE bytes so the
 * name stays under NAME_MAX.
 */
#define ATOMIC_TMP_MARK ".biasline-tmp-"
#define ATOMIC_TMP_BASE 200
/* A temporary file untouched this long (s) belongs to no running save. */
#define ATOMIC_TMP_STALE 60

/* Whether NAME is one of our temporary names for PREFIX (".BASE.mark"). */
static int atomic_is_tmp_name(const char *name, const char *prefix)
{
	size_t n = strlen(prefix);
	if (strncmp(name, prefix, n) != 0 || strlen(name + n) != 6)
		return 0;
	for (const char *c = name + n; *c != '\0'; c++)
		if (!((*c >= 'a' && *c <= 'z') || (*c >= 'A' && *c <= 'Z') ||
		      (*c >= '0' && *c <= '9')))
			return 0;
	return 1;
}

/*
 * Remove what earlier saves of BASE in DIR left behind when they were
 * killed outright (SIGKILL, a crash, power lost): files with our temporary
 * name, regular, not linked elsewhere, owned by this user and untouched
 * for a minute, so a save still running in another process keeps its
 * file.  Anything else is left alone, and a failure only means the file
 * stays: the save itself has already succeeded.
 */
static void atomic_sweep_stale(const char *dir, const char *base)
{
	char prefix[NAME_MAX + 1];
	int r = snprintf(prefix, sizeof prefix, ".%.*s%s", ATOMIC_TMP_BASE, base,
	                 ATOMIC_TMP_MARK);
	if (r < 0 || (size_t)r >= sizeof prefix)
		return;
	DIR *d = opendir(dir);
	if (d == NULL)
		return;
	time_t now = time(NULL);
	struct dirent *e;
	while ((e = readdir(d)) != NULL) {
		if (!atomic_is_tmp_name(e->d_name, prefix))
			continue;
		struct stat st;
		if (fstatat(dirfd(d), e->d_name, &st, AT_SYMLINK_NOFOLLOW) != 0 ||
		    !S_ISREG(st.st_mode) || st.st_nlink != 1 ||
		    st.st_uid != geteuid() ||
		    difftime(now, st.st_mtime) < ATOMIC_TMP_STALE)
			continue;
		unlinkat(dirfd(d), e->d_name, 0);
	}
	closedir(d);
}

/* The stop signals a terminal or a shell sends. */
static void atomic_stop_signals(sigset_t *set)
{
	sigemptyset(set);
	sigaddset(set, SIGINT);
	sigaddset(set, SIGTERM);
	sigaddset(set, SIGHUP);
	sigaddset(set, SIGQUIT);
}

/* Write DATA to PATH atomically, with optional test hooks. */
int atomic_write_file_hooked(const char *path, const void *data, size_t len,
                             const struct atomic_hooks *hooks, char *err,
                             size_t errlen)
{
	char target[PATH_MAX];
	struct stat st;
	int exists = lstat(path, &st) == 0;
	if (exists && S_ISLNK(st.st_mode)) {
		if (realpath(path, target) == NULL) {
			snprintf(err, errlen, "%s: cannot follow the link: %s", path,
			         strerror(errno));
			return -1;
		}
		exists = stat(target, &st) == 0;
	} else if (snprintf(target, sizeof target, "%s", path) >= (int)sizeof target) {
		snprintf(err, errlen, "%s: the path is too long", path);
		return -1;
	}
	if (exists && !S_ISREG(st.st_mode)) {
		snprintf(err, errlen, "%s: not a regular file; not replacing it", path);
		return -1;
	}
	char why[160];
	if (exists && atomic_writable(target, &st, why, sizeof why) != 0) {
		snprintf(err, errlen, "%s: %s", path, why);
		return -1;
	}

	char dir[PATH_MAX], base[NAME_MAX + 1], tmp[PATH_MAX];
	if (atomic_split(target, dir, sizeof dir, base, sizeof base) != 0 ||
	    base[0] == '\0') {
		snprintf(err, errlen, "%s: not a file name", path);
		return -1;
	}
	int r = snprintf(tmp, sizeof tmp, "%s/.%.*s%sXXXXXX", dir, ATOMIC_TMP_BASE,
	                 base, ATOMIC_TMP_MARK);
	if (r < 0 || (size_t)r >= sizeof tmp) {
		snprintf(err, errlen, "%s: the path is too long", path);
		return -1;
	}
	/*
	 * From here until the temporary file is renamed or removed, a stop
	 * signal (Ctrl-C, kill, hangup) waits: it takes effect when this
	 * returns, and no hidden temporary file is left behind.
	 */
	sigset_t stops, old;
	atomic_stop_signals(&stops);
	sigprocmask(SIG_BLOCK, &stops, &old);
	int fd = mkstemp(tmp);
	if (fd < 0) {
		int e = errno;
		sigprocmask(SIG_SETMASK, &old, NULL);
		snprintf(err, errlen, "%s: cannot create a file in %s: %s", path, dir,
		         strerror(e));
		return -1;
	}
	const char *step = "cannot write";
	int e = 0;
	mode_t mode = exists ? (st.st_mode & 07777) : atomic_new_file_mode();
	struct stat mine;
	/* the owner and group first: changing them clears set-id bits */
	if (exists && fstat(fd, &mine) == 0 &&
	    (mine.st_uid != st.st_uid || mine.st_gid != st.st_gid) &&
	    fchown(fd, st.st_uid, st.st_gid) != 0) {
		step = "cannot keep the owner and group of";
		e = errno;
	} else if (fchmod(fd, mode) != 0) {
		step = "cannot set the permissions of";
		e = errno;
	} else if (atomic_write_all(fd, data, len) != 0) {
		e = errno;
	} else if (fsync(fd) != 0) {
		step = "cannot sync";
		e = errno;
	}
	if (close(fd) != 0 && e == 0) {
		step = "cannot close";
		e = errno;
	}
	if (e == 0 && hooks != NULL && hooks->before_rename != NULL) {
		e = hooks->before_rename(hooks->ctx, tmp);
		step = "cannot write";
	}
	if (e == 0 && rename(tmp, target) != 0) {
		step = "cannot replace";
		e = errno;
	}
	if (e != 0) {
		unlink(tmp);
		sigprocmask(SIG_SETMASK, &old, NULL);
		snprintf(err, errlen, "%s: %s the file (%s); the old file is unchanged",
		         path, step, strerror(e));
		return -1;
	}
	sigprocmask(SIG_SETMASK, &old, NULL);
	/* make the rename itself durable */
	int dfd = open(dir, O_RDONLY | O_DIRECTORY);
	if (dfd >= 0) {
		if (fsync(dfd) != 0 && errno != EINVAL && errno != EROFS) {
			e = errno;
			close(dfd);
			snprintf(err, errlen, "%s: written, but syncing the folder %s "
			         "failed (%s)", path, dir, strerror(e));
			return -1;
		}
		close(dfd);
	}
	atomic_sweep_stale(dir, base);
	return 0;
}

/* Write DATA to PATH atomically. */
int atomic_write_file(const char *path, const void *data, size_t len,
                      char *err, size_t errlen)
{
	return atomic_write_file_hooked(path, data, len, NULL, err, errlen);
}

/* Create folder PATH and its parents. */
int atomic_make_dirs(const char *path, unsigned mode, char *err, size_t errlen)
{
	char buf[PATH_MAX];
	if (snprintf(buf, sizeof buf, "%s", path) >= (int)sizeof buf) {
		snprintf(err, errlen, "%s: the path is too long", path);
		return -1;
	}
	for (char *p = buf + 1; ; p++) {
		if (*p != '/' && *p != '\0')
			continue;
		char saved = *p;
		*p = '\0';
		if (mkdir(buf, (mode_t)mode) != 0 && errno != EEXIST) {
			snprintf(err, errlen, "%s: cannot create the folder: %s", buf,
			         strerror(errno));
			return -1;
		}
		struct stat st;
		if (stat(buf, &st) != 0 || !S_ISDIR(st.st_mode)) {
			snprintf(err, errlen, "%s: not a folder", buf);
			return -1;
		}
		*p = saved;
		if (saved == '\0')
			break;
	}
	return 0;
}
