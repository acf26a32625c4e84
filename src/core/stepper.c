/* stepper.c - being written. */
#include "stepper.h"
