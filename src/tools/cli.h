/*
 * cli.h - the `lacuna` command line: subcommand dispatch, help, exit codes.
 *
 * Exit codes (CONTRACT.md): 0 success, 1 runtime failure, 2 bad usage or bad
 * input, with a one-line reason on stderr naming the field at fault.
 */
#ifndef LC_CLI_H
#define LC_CLI_H

#include <stdbool.h>
#include <stdio.h>

enum { LC_EXIT_OK = 0, LC_EXIT_FAIL = 1, LC_EXIT_USAGE = 2 };

int lc_cli_main(int argc, char **argv);

/* One subcommand: argv[0] is the subcommand's name. */
typedef struct lc_command {
    const char *name;
    const char *summary;
    const char *usage; /* full --help text */
    int (*run)(int argc, char **argv);
} lc_command;

/* Prints "lacuna <cmd>: <reason>" on stderr and returns LC_EXIT_USAGE. */
int lc_cli_usage_error(const char *cmd, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Prints "lacuna <cmd>: <reason>" on stderr and returns LC_EXIT_FAIL. */
int lc_cli_fail(const char *cmd, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

/* True when argv holds -h or --help. */
bool lc_cli_wants_help(int argc, char **argv);

/* Reads a whole file ("-" is stdin) into a NUL-terminated buffer (free it). */
char *lc_cli_read_file(const char *path, size_t *len);

/*
 * A token file: one line of 1 to LC_WIRE_TOKEN_MAX printable ASCII characters;
 * trailing white space ignored. 0, or LC_EXIT_USAGE with the reason printed
 * for cmd. out holds at least LC_WIRE_TOKEN_MAX + 2 bytes.
 */
int lc_cli_read_token(const char *cmd, const char *path, char *out, size_t n);

/* Installs handler for each of the n signals in sigs (no SA_RESTART). */
void lc_cli_catch_signals(void (*handler)(int), const int *sigs, int n);

/* Subcommands (src/tools/<name>.c). */
int lc_tool_plan(int argc, char **argv);
/* The session of one `lacuna plan` request: its robot, goal and last
 * velocity (the fuzz target runs the same). NULL when out of memory. */
struct lc_wire_plan_request;
struct lc_session;
struct lc_session *lc_plan_session_new(const struct lc_wire_plan_request *req);
extern const char lc_plan_usage[];

/* `lacuna serve` (src/server/serve.c); its usage is built from the option table. */
int lc_serve(int argc, char **argv);
extern char lc_serve_usage[];
int lc_tool_replay(int argc, char **argv);
extern const char lc_replay_usage[];
int lc_tool_sim(int argc, char **argv);
extern const char lc_sim_usage[];
int lc_tool_bench(int argc, char **argv);
int lc_bench_roundtrip(int argc, char **argv); /* src/tools/bench_ws.c */
extern const char lc_bench_usage[];
int lc_tool_check(int argc, char **argv);
extern const char lc_check_usage[];

#endif
