/* session.c - placeholder until the session module lands. */
#include "session/session.h"
