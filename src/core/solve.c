/* solve.c - being written. */
#include "solve.h"
