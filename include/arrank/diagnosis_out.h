/*
 * arrank/diagnosis_out.h - one sample's diagnosis in plain words.
 */
#ifndef ARRANK_DIAGNOSIS_OUT_H
#define ARRANK_DIAGNOSIS_OUT_H

#include <stdio.h>

#include "arrank/analysis.h"
#include "arrank/error.h"

/*
 * Plain-words account of one result for people: a header line naming the
 * sample and the number of problems, each problem with its evidence (the
 * diagnosis's findings and the analysis's own flags: few points, narrow
 * range, low Ea, poor fit, extrapolation), every point left out of the fit
 * with its reason, then the notes.  An unfitted sample gets one line with
 * its reason.  EIO when the stream fails.
 */
arrank_status arrank_diagnosis_write_text(FILE *stream, const arrank_result *res,
                                          arrank_error *err);

#endif
