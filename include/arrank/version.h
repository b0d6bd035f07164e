/*
 * arrank/version.h - the program and library version.
 */
#ifndef ARRANK_VERSION_H
#define ARRANK_VERSION_H

#define ARRANK_VERSION "0.1.0"

#endif
