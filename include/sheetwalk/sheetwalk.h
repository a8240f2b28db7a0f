/* sheetwalk — continuation, branch points and monodromy of multivalued
 * complex functions.  This header includes the whole public API. */
#ifndef SHEETWALK_H
#define SHEETWALK_H
#include "sheetwalk/error.h"
#include "sheetwalk/expr.h"
#include "sheetwalk/path.h"
#include "sheetwalk/func.h"
#include "sheetwalk/track.h"
#include "sheetwalk/monodromy.h"
#include "sheetwalk/integrate.h"
#include "sheetwalk/cuts.h"
#include "sheetwalk/audit.h"
#include "sheetwalk/sheets.h"
#include "sheetwalk/plot.h"
#endif
