/*
 * json_testing.h - the JSON writer's test switch (tests only).
 */
#ifndef ARRANK_JSON_TESTING_H
#define ARRANK_JSON_TESTING_H

/* 0 (the default): the JSON record per sample writes the sample's own keys
   directly, with the bytes jansson would write; 1: every key through
   jansson, as the --json-points document is written, to compare the two.
   For tests only; not thread-safe. */
void arrank_json_reference(int on);

#endif
