/*
 * fuzz_session.c - libFuzzer target for the session loader: any input must
 * load or be refused with a positioned error, never crash or leak; a
 * session that loads must save, and the saved text must load back to the
 * same session and save to the same text.
 */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "session/session.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

/* Stop loudly: the fuzzer records the input that got here. */
static void fuzz_fail(const char *what, const char *text)
{
	fprintf(stderr, "fuzz_session: %s\n%s\n", what, text != NULL ? text : "");
	abort();
}

/* Feed one input through load, save, load, save. */
int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	struct session s;
	struct session_error err;
	enum session_status st =
		session_load_buffer(&s, "fuzz.yaml", (const char *)data, size, &err);
	if (st != SESSION_OK) {
		if (st != SESSION_BAD_DATA)
			fuzz_fail("unexpected status", err.message);
		if (err.message[0] == '\0')
			fuzz_fail("refused without a message", NULL);
		char line[1024];
		session_error_format(&err, line, sizeof line);
		return 0;
	}
	char *y1 = NULL, *y2 = NULL;
	size_t n1, n2;
	if (session_save_buffer(&s, &y1, &n1, &err) != SESSION_OK)
		fuzz_fail("a loaded session does not save", err.message);
	struct session back;
	if (session_load_buffer(&back, "again.yaml", y1, n1, &err) != SESSION_OK)
		fuzz_fail("saved text does not load back", y1);
	if (!session_equal(&s, &back))
		fuzz_fail("round trip changed the session", y1);
	if (session_save_buffer(&back, &y2, &n2, &err) != SESSION_OK)
		fuzz_fail("the reloaded session does not save", err.message);
	if (n1 != n2 || memcmp(y1, y2, n1) != 0)
		fuzz_fail("saving is not idempotent", y2);
	free(y1);
	free(y2);
	session_fini(&back);
	session_fini(&s);
	return 0;
}
