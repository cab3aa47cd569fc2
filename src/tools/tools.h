/*
 * tools.h - the subcommands of src/tools, for the command table
 * (src/main.c): each runs with argv[0] its own name and returns an exit
 * code (cli.h); each help function prints its --help text.
 */
#ifndef LC_TOOLS_H
#define LC_TOOLS_H

#include <stdio.h>

int lc_tool_plan(int argc, char **argv);
void lc_plan_help(FILE *out);
int lc_tool_replay(int argc, char **argv);
void lc_replay_help(FILE *out);
int lc_tool_sim(int argc, char **argv);
void lc_sim_help(FILE *out);
int lc_tool_bench(int argc, char **argv);
void lc_bench_help(FILE *out);
int lc_tool_check(int argc, char **argv);
void lc_check_help(FILE *out);

/* `lacuna bench --roundtrip` (bench_ws.c), which lc_tool_bench hands over to. */
int lc_bench_roundtrip(int argc, char **argv);

#endif
