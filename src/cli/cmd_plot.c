/* cmd_plot.c - placeholder until the 'plot' command lands (exits 70). */
#include <stdio.h>

#include "commands.h"

/* Report that 'plot' is not built yet. */
int cmd_plot(int argc, char **argv)
{
	(void)argc;
	(void)argv;
	fprintf(stderr, "biasline: 'plot' is not available in this build yet\n");
	return EXIT_SOFTWARE;
}
