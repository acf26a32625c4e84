/* cmd_tidy.c - placeholder until the 'tidy' command lands (exits 70). */
#include <stdio.h>

#include "commands.h"

/* Report that 'tidy' is not built yet. */
int cmd_tidy(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "biasline: 'tidy' is not available in this build yet\n");
	return EXIT_SOFTWARE;
}
