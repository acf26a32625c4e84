/* cmd_solve.c - placeholder until the solve command lands (exits 70). */
#include <stdio.h>

#include "commands.h"

/* Report that 'solve' is not built yet. */
int cmd_solve(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "biasline: 'solve' is not available in this build yet\n");
	return EXIT_SOFTWARE;
}
