/* diagnose.c - being written. */
#include "diagnose.h"
