/*
 * cli.c - the `lacuna` command: subcommand table, global options, help.
 * Each subcommand lives in its own file under src/tools (or src/server for
 * `serve`) and is listed once in the table below.
 */
#include "cli.h"

#include <errno.h>
#include <signal.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "codec.h"
#include "lc_config.h"

static const lc_command commands[] = {
    {"plan", "plan one frame: obstacles, region, target and setpoint", lc_plan_usage,
     lc_tool_plan},
    {"serve", "the daemon: robots over a websocket, the viewer page", lc_serve_usage, lc_serve},
    {"replay", "replay a scenario file and compare its setpoints", lc_replay_usage,
     lc_tool_replay},
    {"sim", "simulate a patrol in a scenario's world", lc_sim_usage, lc_tool_sim},
    {"bench", "time the per-frame plan and the ellipse solver", lc_bench_usage, lc_tool_bench},
    {"check", "stopping-distance advice for a speed, deceleration and sensor range",
     lc_check_usage, lc_tool_check},
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

int lc_cli_usage_error(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fprintf(stderr, "lacuna %s: ", cmd);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    return LC_EXIT_USAGE;
}

int lc_cli_fail(const char *cmd, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    fprintf(stderr, "lacuna %s: ", cmd);
    vfprintf(stderr, fmt, ap);
    fputc('\n', stderr);
    va_end(ap);
    return LC_EXIT_FAIL;
}

bool lc_cli_wants_help(int argc, char **argv)
{
    for (int i = 1; i < argc; i++) {
        if (strcmp(argv[i], "--") == 0)
            return false;
        if (strcmp(argv[i], "-h") == 0 || strcmp(argv[i], "--help") == 0)
            return true;
    }
    return false;
}

char *lc_cli_read_file(const char *path, size_t *len)
{
    FILE *f = strcmp(path, "-") == 0 ? stdin : fopen(path, "rb");
    if (!f)
        return NULL;
    struct stat st;
    if (fstat(fileno(f), &st) == 0 && S_ISDIR(st.st_mode)) {
        if (f != stdin)
            fclose(f);
        errno = EISDIR; /* fopen takes a directory; reading it fails with EIO */
        return NULL;
    }
    size_t cap = 65536, n = 0;
    char *buf = malloc(cap);
    while (buf) {
        if (n + 1 >= cap) {
            char *nb = realloc(buf, cap * 2);
            if (!nb) {
                free(buf);
                buf = NULL;
                break;
            }
            buf = nb;
            cap *= 2;
        }
        size_t got = fread(buf + n, 1, cap - n - 1, f);
        n += got;
        if (got == 0)
            break;
    }
    int err = ferror(f) ? EIO : 0;
    if (f != stdin)
        fclose(f);
    if (buf && err) {
        free(buf);
        errno = err;
        return NULL;
    }
    if (buf) {
        buf[n] = '\0';
        if (len)
            *len = n;
    }
    return buf;
}

int lc_cli_main(int argc, char **argv)
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
            fputs(commands[i].usage, stdout);
            return LC_EXIT_OK;
        }
        return commands[i].run(argc - 1, argv + 1);
    }
    fprintf(stderr, "lacuna: unknown command '%s' (see lacuna --help)\n", cmd);
    return LC_EXIT_USAGE;
}

int lc_cli_read_token(const char *cmd, const char *path, char *out, size_t n)
{
    size_t len = 0;
    char *text = lc_cli_read_file(path, &len);
    if (!text)
        return lc_cli_usage_error(cmd, "token file %s: %s", path, strerror(errno));
    while (len && (text[len - 1] == '\n' || text[len - 1] == '\r' || text[len - 1] == ' ' ||
                   text[len - 1] == '\t'))
        text[--len] = '\0';
    bool ok = len > 0 && len <= LC_WIRE_TOKEN_MAX && len < n;
    for (size_t i = 0; ok && i < len; i++)
        ok = text[i] >= 0x20 && text[i] <= 0x7e;
    if (ok)
        memcpy(out, text, len + 1);
    free(text);
    if (!ok)
        return lc_cli_usage_error(cmd, "token file %s: must hold 1 to %d printable ASCII characters",
                                  path, LC_WIRE_TOKEN_MAX);
    return 0;
}

void lc_cli_catch_signals(void (*handler)(int), const int *sigs, int n)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = handler;
    sigemptyset(&sa.sa_mask);
    for (int i = 0; i < n; i++)
        sigaction(sigs[i], &sa, NULL);
}
