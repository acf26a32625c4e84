/* cmd_tui.c - placeholder until the 'tui' command lands (exits 70). */
#include <stdio.h>

#include "commands.h"

/* Report that 'tui' is not built yet. */
int cmd_tui(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "biasline: 'tui' is not available in this build yet\n");
	return EXIT_SOFTWARE;
}
