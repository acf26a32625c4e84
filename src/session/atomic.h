/*
 * atomic.h - replace a file atomically: write a temporary file in the same
 * folder, give it the old file's owner, group and mode, flush and fsync
 * it, rename it over the target, fsync the folder.  On any failure the
 * temporary file is removed and the old file is left as it was.
 */
#ifndef BIASLINE_ATOMIC_H
#define BIASLINE_ATOMIC_H

#include <stddef.h>

/*
 * Test hooks: called at fixed points of a write; a non-zero return makes
 * the write fail there as if the system call had failed with that errno
 * value.  Only tests set them; atomic_write_file passes none.
 */
struct atomic_hooks {
	/* after the data is written and synced, before the rename */
	int (*before_rename)(void *ctx, const char *tmp_path);
	void *ctx;
};

/*
 * Write LEN bytes of DATA to PATH atomically.  A symbolic link at PATH is
 * followed (the file it names is replaced).  A file that is there keeps
 * its owner, group and mode; one that is read-only to the user (for root:
 * one with no write permission bit at all) is refused, as is one whose
 * owner or group cannot be kept.  Stop signals (SIGINT, SIGTERM, SIGHUP,
 * SIGQUIT) are held while the temporary file exists, so none leaves it
 * behind.  The temporary file is ".NAME.biasline-tmp-XXXXXX" beside the
 * file; after a successful write, such files of an earlier save of the same
 * file that was killed outright (regular, this user's, untouched for a
 * minute) are removed.  Returns 0, or -1 with a message naming the path
 * and the reason in ERR.
 */
int atomic_write_file(const char *path, const void *data, size_t len,
                      char *err, size_t errlen);

/* atomic_write_file with test hooks (HOOKS may be NULL). */
int atomic_write_file_hooked(const char *path, const void *data, size_t len,
                             const struct atomic_hooks *hooks, char *err,
                             size_t errlen);

/*
 * Create folder PATH and its missing parents with MODE (existing folders
 * are left as they are).  Returns 0, or -1 with a message in ERR.
 */
int atomic_make_dirs(const char *path, unsigned mode, char *err, size_t errlen);

#endif
