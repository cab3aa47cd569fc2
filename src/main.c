/*
 * main.c - the `lacuna` command: the subcommand table, the global options
 * and the main help. The top of the build: the one place that knows both
 * the server (`serve`) and the tools, so that neither knows the other.
 * Each subcommand is listed once below.
 */
#include <stdio.h>
#include <string.h>

#include "cli.h"
#include "lc_config.h"
#include "serve.h"
#include "tools.h"

/* One subcommand: run gets argv[0] the subcommand's name. */
typedef struct command {
    const char *name;
    const char *summary;
    void (*help)(FILE *out); /* its --help text */
    int (*run)(int argc, char **argv);
} command;

static const command commands[] = {
    {"plan", "plan one frame: obstacles, region, target and setpoint", lc_plan_help,
     lc_tool_plan},
    {"serve", "the daemon: robots over a websocket, the viewer page", lc_serve_help, lc_serve},
    {"replay", "replay a scenario file and compare its setpoints", lc_replay_help,
     lc_tool_replay},
    {"sim", "simulate a patrol in a scenario's world", lc_sim_help, lc_tool_sim},
    {"bench", "time the per-frame plan and the ellipse solver", lc_bench_help, lc_tool_bench},
    {"check", "stopping-distance advice for a speed, deceleration and sensor range",
     lc_check_help, lc_tool_check},
};

#define N_COMMANDS (int)(sizeof commands / sizeof commands[0])

static void print_main_help(FILE *out)
{
    fprintf(out,
            "lacuna %s - local navigation for patrol robots\n"
            "\n"
            "usage: lacuna <command> [options]\n"
            "       lacuna --help | --version\n"
            "       lacuna <command> --help\n"
            "\n"
            "commands:\n",
            LC_VERSION);
    for (int i = 0; i < N_COMMANDS; i++)
        fprintf(out, "  %-8s %s\n", commands[i].name, commands[i].summary);
    fprintf(out, "\n"
                 "exit status: 0 success, 1 runtime failure, 2 bad usage or bad input.\n"
                 "lacuna is not a safety-rated component: see `lacuna serve --help`.\n");
}

int main(int argc, char **argv)
{
    if (argc < 2) {
        print_main_help(stderr);
        return LC_EXIT_USAGE;
    }
    const char *cmd = argv[1];
    if (strcmp(cmd, "-h") == 0 || strcmp(cmd, "--help") == 0 || strcmp(cmd, "help") == 0) {
        print_main_help(stdout);
        return LC_EXIT_OK;
    }
    if (strcmp(cmd, "-V") == 0 || strcmp(cmd, "--version") == 0) {
        printf("lacuna %s\n", LC_VERSION);
        return LC_EXIT_OK;
    }
    for (int i = 0; i < N_COMMANDS; i++) {
        if (strcmp(cmd, commands[i].name) != 0)
            continue;
        if (lc_cli_wants_help(argc - 1, argv + 1)) {
            commands[i].help(stdout);
            return LC_EXIT_OK;
        }
        return commands[i].run(argc - 1, argv + 1);
    }
    fprintf(stderr, "lacuna: unknown command '%s' (see lacuna --help)\n", cmd);
    return LC_EXIT_USAGE;
}
