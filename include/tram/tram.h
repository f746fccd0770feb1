/*
 * tram/tram.h - umbrella header of libtram: include this to get the whole
 * public API.  See docs/notation.md for the frame and unit conventions.
 */
#ifndef TRAM_TRAM_H
#define TRAM_TRAM_H

#include "tram/chain.h"
#include "tram/check.h"
#include "tram/common.h"
#include "tram/fileio.h"
#include "tram/handeye.h"
#include "tram/plot.h"
#include "tram/report.h"
#include "tram/points.h"
#include "tram/point_solve.h"
#include "tram/records.h"
#include "tram/register.h"
#include "tram/register_json.h"
#include "tram/rotation.h"
#include "tram/se3.h"
#include "tram/so3.h"
#include "tram/solve.h"
#include "tram/image.h"
#include "tram/camera.h"
#include "tram/pose.h"
#include "tram/pixels.h"
#include "tram/pixel_solve.h"
#include "tram/plan.h"

#endif
