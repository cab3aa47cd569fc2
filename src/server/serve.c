/*
 * serve.c - `lacuna serve`: options, tokens, the loopback rule, the viewer
 * page (given, installed or beside the build), then the server loop
 * (server.h). The option list of --help is printed from the option table
 * (config.c), the one place options are declared.
 */
#include "serve.h"

#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "cli.h"
#include "codec.h"
#include "config.h"
#include "file.h"
#include "lc_config.h"
#include "log.h"
#include "server.h"

#define CMD "serve"

static const char usage_head[] =
    "usage: lacuna serve [--listen HOST:PORT] [--config FILE] [--web DIR] [--record DIR]\n"
    "                    [--token-file FILE] [--viewer-token-file FILE]\n"
    "                    [--tls-cert FILE --tls-key FILE] [--print-config]\n"
    "                    [--watchdog-ms N] [--log-level L] [other options below]\n"
    "\n"
    "The navigation daemon. Robots connect over a websocket (ws://HOST:PORT/, subprotocol\n"
    "lacuna.v2), send their description, route and sensor frames, and get one velocity\n"
    "setpoint per frame; browsers get the viewer page at http://HOST:PORT/. Without a\n"
    "frame for watchdog_ms the robot gets stop setpoints (state stale). SIGINT/SIGTERM\n"
    "send a last stop setpoint to every robot and exit 0; SIGHUP reopens the log and\n"
    "the recording files.\n"
    "\n"
    "A robot whose link drops keeps its session for grace_ms: saying hello again under\n"
    "its name resumes its description, route, progress and velocity (the welcome says\n"
    "resumed). A robot's link from which nothing comes is pinged and closed after\n"
    "link_timeout_ms, which lets its name go; with a robot token, a hello that proves\n"
    "it takes a name over at once.\n"
    "\n"
    "SAFETY. lacuna is not a safety-rated component. A robot that moves near people\n"
    "needs a safety-rated protective stop (certified safety scanner or bumper, emergency\n"
    "stop) independent of lacuna, and its speeds and separation distances set by a risk\n"
    "assessment under the standards that apply where it runs (for example ISO 3691-4 for\n"
    "driverless industrial trucks and mobile robots, ISO 13482 for personal care robots,\n"
    "IEC 61496-3 for safety laser scanners, ISO 13855 for separation distances) and local\n"
    "regulations. Test new settings in simulation, then at low speed in a cleared area.\n"
    "\n"
    "The server listens on 127.0.0.1 unless told otherwise and refuses any other address\n"
    "without a robot token (--token-file); there, give it --tls-cert and --tls-key too, so\n"
    "the token does not cross the network in clear. A browser may open a websocket only\n"
    "from the page's own origin or one named by --allow-origin. Static files are served\n"
    "from the web directory only: links that lead out of it are refused. Options (also\n"
    "keys of the --config JSON object; flags override the file):\n"
    "  --config FILE\n"
    "      JSON object of options, e.g. {\"listen\": \"127.0.0.1:7641\", \"watchdog_ms\": 150}\n"
    "  --print-config\n"
    "      print the effective configuration as JSON and exit\n";

void lc_serve_help(FILE *out)
{
    fputs(usage_head, out);
    lc_server_config_help(out);
    fputs("\nexit status: 0 after a signal, 1 when it cannot listen, 2 on bad usage.\n", out);
}

static bool is_flag(const char *a, const char *name, const char **value)
{
    size_t n = strlen(name);
    if (strncmp(a, name, n) != 0)
        return false;
    if (a[n] == '=') {
        *value = a + n + 1;
        return true;
    }
    return a[n] == '\0';
}

/* --config first, then every other flag over it. */
static int read_options(int argc, char **argv, lc_server_config *cfg, bool *print)
{
    char err[512];
    lc_server_config_default(cfg);
    for (int i = 1; i < argc; i++) {
        const char *v = NULL;
        if (is_flag(argv[i], "--config", &v)) {
            if (!v && (v = i + 1 < argc ? argv[++i] : NULL) == NULL)
                return lc_cli_usage_error(CMD, "--config needs a FILE");
            if (lc_server_config_load(cfg, v, err, sizeof err) < 0)
                return lc_cli_usage_error(CMD, "%s", err);
        }
    }
    for (int i = 1; i < argc; i++) {
        const char *v = NULL;
        if (is_flag(argv[i], "--config", &v)) {
            i += v ? 0 : 1;
            continue;
        }
        if (strcmp(argv[i], "--print-config") == 0) {
            *print = true;
            continue;
        }
        char flag[128];
        const char *eq = strchr(argv[i], '=');
        size_t fl = eq ? (size_t)(eq - argv[i]) : strlen(argv[i]);
        snprintf(flag, sizeof flag, "%.*s", (int)fl, argv[i]);
        v = eq ? eq + 1 : (i + 1 < argc ? argv[i + 1] : NULL);
        int rc = lc_server_config_flag(cfg, flag, v, err, sizeof err);
        if (rc < 0)
            return lc_cli_usage_error(CMD, "%s", err);
        if (rc == 0)
            return lc_cli_usage_error(CMD, "unknown option '%s' (see lacuna serve --help)",
                                      argv[i]);
        i += eq ? 0 : 1;
    }
    return 0;
}

static bool is_dir(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISDIR(st.st_mode);
}

/* A viewer directory: one with the page's index.html (a bare web/ of some
 * other program beside ours is not it). */
static bool is_viewer(const char *dir)
{
    char index[PATH_MAX + 16];
    snprintf(index, sizeof index, "%s/index.html", dir);
    struct stat st;
    return is_dir(dir) && stat(index, &st) == 0 && S_ISREG(st.st_mode);
}

/* dir/rel, each leading "../" of rel taking the last component off dir
 * (dir is the program's resolved directory, so this is exact). */
static void join_up(char *out, size_t n, const char *dir, const char *rel)
{
    size_t len = strlen(dir);
    for (; strncmp(rel, "../", 3) == 0; rel += 3) {
        while (len > 0 && dir[len - 1] != '/')
            len--;
        while (len > 0 && dir[len - 1] == '/')
            len--;
    }
    snprintf(out, n, "%.*s/%s", (int)len, dir, rel);
}

/*
 * Where the viewer page may be when --web is not given, in order:
 *  1. the installed data directory as seen from the program
 *     (<prefix>/<bindir>/lacuna -> <prefix>/<datadir>/lacuna/web), so that a
 *     tree installed under a DESTDIR, or moved whole, finds its own viewer;
 *  2. beside the build: <build>/../web (a build directory in the source
 *     tree) and <build>/web (the link meson makes in every build directory);
 *  3. the data directory compiled in (meson's prefix and datadir), for a
 *     program copied away from its tree.
 * An installed program at its place finds 1, which is 3. A build's program
 * looks beside itself before the compiled-in path, so that a developer with
 * an older lacuna installed still gets the viewer of the tree being built.
 * Returns how many candidates were written to cand.
 */
#define N_WEB_CANDIDATES 4
static int web_candidates(char cand[N_WEB_CANDIDATES][PATH_MAX])
{
    int n = 0;
    char exe[PATH_MAX];
    ssize_t k = readlink("/proc/self/exe", exe, sizeof exe - 1);
    char *slash = NULL;
    if (k > 0) {
        exe[k] = '\0';
        slash = strrchr(exe, '/');
    }
    if (slash) {
        *slash = '\0';
        if (LC_WEB_FROM_BIN[0])
            join_up(cand[n++], PATH_MAX, exe, LC_WEB_FROM_BIN);
        join_up(cand[n++], PATH_MAX, exe, "../web");
        join_up(cand[n++], PATH_MAX, exe, "web");
    }
    if (n == 0 || strcmp(cand[0], LC_WEB_INSTALLED) != 0)
        snprintf(cand[n++], PATH_MAX, "%s", LC_WEB_INSTALLED);
    return n;
}

/* The first candidate that holds the viewer, else a usage error naming
 * every path tried: a daemon without its page is a broken install, better
 * refused at start than found out as a 404 in the field. */
static int find_web(char *out, size_t n)
{
    static char cand[N_WEB_CANDIDATES][PATH_MAX];
    int count = web_candidates(cand);
    char tried[N_WEB_CANDIDATES * (PATH_MAX + 2)] = "";
    for (int i = 0; i < count; i++) {
        if (is_viewer(cand[i]) && realpath(cand[i], out) && strlen(out) < n)
            return 0;
        strcat(tried, i ? ", " : "");
        strcat(tried, cand[i]);
    }
    return lc_cli_usage_error(CMD, "no viewer page found (tried %s): give --web DIR", tried);
}

static int check_dirs(lc_server_config *cfg, char *web, size_t n)
{
    int rc;
    if (cfg->web[0]) {
        if (!is_dir(cfg->web))
            return lc_cli_usage_error(CMD, "web: %s is not a directory", cfg->web);
        snprintf(web, n, "%s", cfg->web);
    } else if ((rc = find_web(web, n))) {
        return rc;
    }
    if (cfg->record[0] && !is_dir(cfg->record) && mkdir(cfg->record, 0755) != 0)
        return lc_cli_usage_error(CMD, "record: %s: %s", cfg->record, strerror(errno));
    return 0;
}

/* dt bounds in order; TLS files both or neither, and readable (libwebsockets'
 * own message would be vaguer). */
static int check_values(const lc_server_config *cfg)
{
    if (!cfg->tls_cert[0] != !cfg->tls_key[0])
        return lc_cli_usage_error(CMD, "tls_cert and tls_key: give both or neither");
    if (cfg->dt_min > cfg->dt_max)
        return lc_cli_usage_error(CMD, "dt_min: %g is more than dt_max %g", cfg->dt_min,
                                  cfg->dt_max);
    const char *files[] = {cfg->tls_cert, cfg->tls_key};
    for (int i = 0; i < 2 && cfg->tls_cert[0]; i++)
        if (access(files[i], R_OK) != 0)
            return lc_cli_usage_error(CMD, "%s: %s: %s", i ? "tls_key" : "tls_cert", files[i],
                                      strerror(errno));
    return 0;
}

int lc_serve(int argc, char **argv)
{
    static lc_server_config cfg;
    static char robot_token[LC_WIRE_TOKEN_MAX + 2], viewer_token[LC_WIRE_TOKEN_MAX + 2];
    static char web[PATH_MAX];
    bool print = false;
    int rc = read_options(argc, argv, &cfg, &print);
    if (rc)
        return rc;
    if (print) {
        lc_server_config_print(&cfg, stdout);
        return LC_EXIT_OK;
    }
    lc_server_params p = {.cfg = &cfg};
    char err[256];
    if (lc_listen_parse(cfg.listen, &p.listen, err, sizeof err) < 0)
        return lc_cli_usage_error(CMD, "%s", err);
    if (cfg.token_file[0] && (rc = lc_file_read_token(CMD, cfg.token_file, LC_WIRE_TOKEN_MAX, robot_token,
                                                       sizeof robot_token)))
        return rc;
    if (cfg.viewer_token_file[0] &&
        (rc = lc_file_read_token(CMD, cfg.viewer_token_file, LC_WIRE_TOKEN_MAX, viewer_token,
                                   sizeof viewer_token)))
        return rc;
    if (!p.listen.loopback && !cfg.token_file[0])
        return lc_cli_usage_error(CMD,
                                  "refusing to listen on %s (not a loopback address) without a "
                                  "robot token: give --token-file FILE",
                                  p.listen.host);
    if ((rc = check_dirs(&cfg, web, sizeof web)) || (rc = check_values(&cfg)))
        return rc;
    lc_log_level level = LC_LOG_INFO;
    lc_log_level_from_name(cfg.log_level, &level);
    if (lc_log_open(level, cfg.log_file) < 0)
        return lc_cli_usage_error(CMD, "log_file: cannot open %s: %s", cfg.log_file,
                                  strerror(errno));
    p.robot_token = cfg.token_file[0] ? robot_token : NULL;
    p.viewer_token = cfg.viewer_token_file[0] ? viewer_token : NULL;
    p.web_dir = web;
    p.tls_cert = cfg.tls_cert[0] ? cfg.tls_cert : NULL;
    p.tls_key = cfg.tls_key[0] ? cfg.tls_key : NULL;
    if (!p.listen.loopback && !p.tls_cert)
        lc_log(LC_LOG_WARN, "listening on %s without TLS: tokens cross the network in clear "
                            "(give --tls-cert and --tls-key)", p.listen.host);
    lc_log(LC_LOG_INFO, "viewer page from %s", web);
    lc_log(LC_LOG_INFO, "not a safety-rated component: keep an independent safety-rated "
                        "protective stop (see lacuna serve --help)");
    rc = lc_server_run(&p);
    lc_log_close();
    return rc == 0 ? LC_EXIT_OK : LC_EXIT_FAIL;
}
