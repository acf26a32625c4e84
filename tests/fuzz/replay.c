/*
 * replay.c - run every file of a corpus folder through the fuzz target
 * once, so the inputs the fuzzer found stay tested in ordinary builds.
 */
#include <dirent.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Read PATH into a new buffer; returns NULL on failure. */
static unsigned char *replay_read(const char *path, size_t *len)
{
	FILE *f = fopen(path, "rb");
	if (f == NULL)
		return NULL;
	size_t cap = 4096, n = 0;
	unsigned char *buf = malloc(cap);
	size_t got;
	while (buf != NULL && (got = fread(buf + n, 1, cap - n, f)) > 0) {
		n += got;
		if (n == cap) {
			unsigned char *b = realloc(buf, cap * 2);
			if (b == NULL) {
				free(buf);
				buf = NULL;
				break;
			}
			buf = b;
			cap *= 2;
		}
	}
	fclose(f);
	*len = n;
	return buf;
}

/* Replay each corpus file named on the command line or found in a folder. */
int main(int argc, char **argv)
{
	int count = 0;
	for (int a = 1; a < argc; a++) {
		DIR *d = opendir(argv[a]);
		if (d == NULL) {
			fprintf(stderr, "replay: cannot open %s\n", argv[a]);
			return 1;
		}
		struct dirent *e;
		while ((e = readdir(d)) != NULL) {
			if (e->d_name[0] == '.')
				continue;
			char path[4096];
			snprintf(path, sizeof path, "%s/%s", argv[a], e->d_name);
			struct stat st;
			if (stat(path, &st) != 0 || !S_ISREG(st.st_mode))
				continue;
			size_t len;
			unsigned char *buf = replay_read(path, &len);
			if (buf == NULL) {
				fprintf(stderr, "replay: cannot read %s\n", path);
				closedir(d);
				return 1;
			}
			LLVMFuzzerTestOneInput(buf, len);
			free(buf);
			count++;
		}
		closedir(d);
	}
	printf("replayed %d inputs\n", count);
	return count > 0 ? 0 : 1;
}
