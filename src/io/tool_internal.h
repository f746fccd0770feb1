/*
 * tool_internal.h - the tool (TCP) offset of records whose robot poses are
 * tool poses (tool.c): its text form and applying it to the stations.
 */
#ifndef TRAM_TOOL_INTERNAL_H
#define TRAM_TOOL_INTERNAL_H

#include "tram/records.h"
#include "core/tram_internal.h"

/* Parse the text form "X,Y,ZUNIT ROTATION" (docs/records.md) into
 * T_flange_tool with its translation in *unit.  On failure returns -1,
 * *at is the 0-based offset of the bad part in s and why says what was
 * expected. */
int tram__tool_parse(const char *s, tram_se3 *T_flange_tool, tram_length_unit *unit, size_t *at,
                     char *why, size_t cap);

/* T_base_flange = T_base_tool inv(T_flange_tool) for every station of a
 * record set whose robot block holds tool poses and whose tool is known
 * (r->has_tool); out may alias T_base_tool. */
void tram__tool_to_flange(const tram_records *r, const tram_se3 *T_base_tool, tram_se3 *out);

#endif
