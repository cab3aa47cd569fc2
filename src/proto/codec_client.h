/*
 * codec_client.h - decoders of the server -> client messages (welcome,
 * setpoint, event, error, warning), for lc_wire_decode's dispatch (inside
 * src/proto). Clients (lacuna sim --connect, the tests) read what the
 * server sends with the same strictness as the server reads robots.
 *
 * Each reads a message object whose "type" has already been matched and
 * returns 0, or -1 with *err naming the field at fault.
 */
#ifndef LC_CODEC_CLIENT_H
#define LC_CODEC_CLIENT_H

#include "codec.h"

int lc_wire_welcome_from_json(const struct cJSON *obj, lc_wire_welcome *out,
                              lc_wire_error *err);
int lc_wire_setpoint_from_json(const struct cJSON *obj, lc_wire_setpoint *out,
                               lc_wire_error *err);
int lc_wire_event_from_json(const struct cJSON *obj, lc_wire_event *out, lc_wire_error *err);
/* A received error message into *out (its code never LC_WIRE_OK). */
int lc_wire_error_from_json(const struct cJSON *obj, lc_wire_error *out, lc_wire_error *err);
int lc_wire_warning_from_json(const struct cJSON *obj, lc_wire_warning *out,
                              lc_wire_error *err);

#endif
