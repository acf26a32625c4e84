/* render.c - placeholder until the renderer lands. */
#include "core/model.h"
