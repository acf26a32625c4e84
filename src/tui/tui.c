/* tui.c - placeholder until the front end lands. */
#include "core/model.h"
