/*
 * serve.h - `lacuna serve`, for the command table (src/main.c): options,
 * tokens and the loopback rule, then the server loop (server.h).
 */
#ifndef LC_SERVE_H
#define LC_SERVE_H

#include <stdio.h>

/* argv[0] is "serve"; returns an exit code (cli.h). */
int lc_serve(int argc, char **argv);

/* The --help text: the head, then every option of the table (config.h). */
void lc_serve_help(FILE *out);

#endif
