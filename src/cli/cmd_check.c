/* cmd_check.c - placeholder until the 'check' command lands (exits 70). */
#include <stdio.h>

#include "commands.h"

/* Report that 'check' is not built yet. */
int cmd_check(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "biasline: 'check' is not available in this build yet\n");
	return EXIT_SOFTWARE;
}
