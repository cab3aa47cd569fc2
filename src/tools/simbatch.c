/*
 * simbatch.c - `lacuna sim FILE... | DIR` (see simbatch.h).
 *
 * Files: each FILE as given, and the *.jsonl files of each DIR at any depth,
 * in sorted order (names starting with '.' skipped). Every header is read
 * before any run, so that a missing or bad file stops the batch (exit 2)
 * with its reason. Runs: every file once with its header's model, or once
 * per model of --model. A child writes its JSON result to a pipe and its
 * stderr to another; a child that exits other than 0 or 1, or without a
 * result, is an "error" run and the first line it wrote to stderr is shown.
 *
 * Figures per family and model: runs, done, collisions (summed), blocked,
 * other outcomes (stuck, timeout, error), and the medians over the runs that
 * ended done of their time and of time / (shortest_path / v_max) (the
 * middle value, or the mean of the two middle ones). A run SVG (--svg-dir)
 * is written by every child and removed when the run met its expectation.
 */
#include "simbatch.h"
#include "tools.h"

#include <dirent.h>
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cjson/cJSON.h>

#include "cli.h"
#include "replay.h"

#define JOBS_MAX 256
#define SEEDS_MAX 1000
#define PATH_TEXT_MAX 4096

typedef struct bworld {
    char *path;
    char *name; /* base of its run SVG: the path below its DIR, '/' as '_' */
    char family[LC_SCENARIO_FAMILY_MAX];
    double shortest_path, v_max;
    lc_model model; /* the header's */
} bworld;

typedef struct brun {
    int world;
    lc_model model;
    unsigned long long seed; /* of the range noise */
    char outcome[16]; /* sim's outcome, or "error" */
    bool ok;
    int collisions;
    double sim_time;
    double ratio; /* NAN unless done with a known shortest path */
} brun;

typedef struct bopts {
    long jobs;
    unsigned models; /* bit 1 << model for each model asked for; 0: the header's */
    bool json;
    unsigned long long seed; /* the first run's range noise seed */
    long seeds;              /* runs per world and model, seeds seed, seed + 1, ... */
    const char *svg_dir, *max_time;
} bopts;

typedef struct batch {
    bopts o;
    bworld *w;
    int n_w, cap_w;
    brun *r;
    int n_r, cap_r;
    bool progress; /* a progress line is on stderr */
} batch;

/* A child's pipes and what came through them. */
typedef struct job {
    pid_t pid; /* 0: a free slot */
    int run;
    int fd[2]; /* stdout, stderr; -1 once closed */
    char *text[2];
    size_t len[2], cap[2];
} job;

static const char *const single_only[] = {"--out",  "--svg",  "--connect", "--token-file",
                                          "--name", "--laps", "--timeout"};

static bool valued(const char *a)
{
    static const char *const batch_valued[] = {"--jobs", "--svg-dir", "--model", "--seed",
                                               "--seeds", "--max-time"};
    for (size_t k = 0; k < sizeof batch_valued / sizeof batch_valued[0]; k++)
        if (strcmp(a, batch_valued[k]) == 0)
            return true;
    for (size_t k = 0; k < sizeof single_only / sizeof single_only[0]; k++)
        if (strcmp(a, single_only[k]) == 0)
            return true;
    return false;
}

static bool is_dir(const char *path)
{
    struct stat st;
    return stat(path, &st) == 0 && S_ISDIR(st.st_mode);
}

static bool has_suffix(const char *s, const char *suffix)
{
    size_t n = strlen(s), k = strlen(suffix);
    return n > k && strcmp(s + n - k, suffix) == 0;
}

bool lc_sim_batch_wanted(int argc, char **argv)
{
    int files = 0;
    const char *file = NULL;
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i], *v = i + 1 < argc ? argv[i + 1] : "";
        if (strcmp(a, "--jobs") == 0 || strcmp(a, "--svg-dir") == 0 ||
            strcmp(a, "--seeds") == 0 || (strcmp(a, "--model") == 0 && strcmp(v, "both") == 0))
            return true;
        if (valued(a))
            i++;
        else if (a[0] != '-' || a[1] == '\0')
            file = files++ ? file : a;
    }
    return files > 1 || (files == 1 && is_dir(file));
}

/* ------------------------------------------------------------ options */

static int parse_model(const char *v, unsigned *models)
{
    if (strcmp(v, "point") == 0)
        *models = 1u << LC_MODEL_POINT;
    else if (strcmp(v, "unicycle") == 0)
        *models = 1u << LC_MODEL_UNICYCLE;
    else if (strcmp(v, "both") == 0)
        *models = 1u << LC_MODEL_POINT | 1u << LC_MODEL_UNICYCLE;
    else
        return lc_cli_usage_error("sim", "--model: point, unicycle or both, not %s", v);
    return 0;
}

/* --jobs, --seed, --seeds and --max-time checked here, so that no child
 * fails on them. */
static int parse_number(const char *opt, const char *v, bopts *o)
{
    char *end;
    errno = 0;
    if (strcmp(opt, "--jobs") == 0) {
        o->jobs = strtol(v, &end, 10);
        if (*v == '\0' || *end != '\0' || errno || o->jobs < 1 || o->jobs > JOBS_MAX)
            return lc_cli_usage_error("sim", "--jobs: a whole number from 1 to %d, not %s",
                                      JOBS_MAX, v);
    } else if (strcmp(opt, "--seed") == 0) {
        o->seed = strtoull(v, &end, 10);
        if (*v == '\0' || *v == '-' || *end != '\0' || errno)
            return lc_cli_usage_error("sim", "--seed: not a whole number >= 0: %s", v);
    } else if (strcmp(opt, "--seeds") == 0) {
        o->seeds = strtol(v, &end, 10);
        if (*v == '\0' || *end != '\0' || errno || o->seeds < 1 || o->seeds > SEEDS_MAX)
            return lc_cli_usage_error("sim", "--seeds: a whole number from 1 to %d, not %s",
                                      SEEDS_MAX, v);
    } else {
        double t = strtod(v, &end);
        if (*v == '\0' || *end != '\0' || !(t > 0) || isinf(t))
            return lc_cli_usage_error("sim", "--max-time: not a number > 0: %s", v);
        o->max_time = v;
    }
    return 0;
}

static int parse_option(const char *a, const char *v, bopts *o)
{
    for (size_t k = 0; k < sizeof single_only / sizeof single_only[0]; k++)
        if (strcmp(a, single_only[k]) == 0)
            return lc_cli_usage_error("sim", "%s runs one scenario, not a batch (--svg-dir "
                                             "keeps the failures' SVGs)", a);
    if (!v)
        return lc_cli_usage_error("sim", "%s needs a value", a);
    if (strcmp(a, "--model") == 0)
        return parse_model(v, &o->models);
    if (strcmp(a, "--svg-dir") == 0) {
        o->svg_dir = v;
        return 0;
    }
    return parse_number(a, v, o);
}

/* Options into b->o; the inputs' indices into in (n_in of them). */
static int parse_args(int argc, char **argv, batch *b, int *in, int *n_in)
{
    long cpus = sysconf(_SC_NPROCESSORS_ONLN);
    b->o = (bopts){.jobs = cpus < 1 ? 1 : cpus > JOBS_MAX ? JOBS_MAX : cpus, .seed = 1, .seeds = 1};
    *n_in = 0;
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        if (strcmp(a, "--json") == 0) {
            b->o.json = true;
        } else if (valued(a)) {
            int rc = parse_option(a, i + 1 < argc ? argv[i + 1] : NULL, &b->o);
            if (rc)
                return rc;
            i++;
        } else if (a[0] == '-' && a[1] != '\0') {
            return lc_cli_usage_error("sim", "unknown option %s (see --help)", a);
        } else {
            in[(*n_in)++] = i;
        }
    }
    if (*n_in == 0)
        return lc_cli_usage_error("sim", "no scenario FILE or DIR (see --help)");
    if ((unsigned long long)(b->o.seeds - 1) > ULLONG_MAX - b->o.seed)
        return lc_cli_usage_error("sim", "--seed %llu with --seeds %ld runs past the largest "
                                         "seed, %llu", b->o.seed, b->o.seeds, ULLONG_MAX);
    return 0;
}

/* ------------------------------------------------------------ the files */

static int cmp_str(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

static char *joined(const char *a, const char *b)
{
    size_t n = strlen(a) + strlen(b) + 2;
    char *s = malloc(n);
    if (s)
        snprintf(s, n, "%s%s%s", a, *a && *b ? "/" : "", b);
    return s;
}

/* Reads the header of path: the world's figures, or an exit code. */
static int load_world(batch *b, const char *path, const char *rel)
{
    char *text;
    size_t len;
    lc_scenario_reader rd;
    lc_scenario_header h;
    int rc = lc_replay_load("sim", path, &text, &len, &rd, &h);
    if (rc)
        return rc;
    if (!h.has_world || !h.has_start || !h.has_route || h.route.count == 0)
        rc = lc_cli_usage_error("sim", "%s: not a world to simulate (the header needs world, "
                                       "start and route)", path);
    else if (LC_GROW(NULL, b->w, b->cap_w, b->n_w + 1) < 0)
        rc = lc_cli_fail("sim", "out of memory");
    if (!rc) {
        bworld *w = &b->w[b->n_w];
        *w = (bworld){.path = strdup(path), .name = strdup(rel), .shortest_path = h.shortest_path,
                      .v_max = h.robot.v_max, .model = h.robot.model};
        memcpy(w->family, h.family, sizeof w->family);
        for (char *c = w->name; c && *c; c++)
            *c = *c == '/' ? '_' : *c;
        if (w->name && has_suffix(w->name, ".jsonl"))
            w->name[strlen(w->name) - 6] = '\0';
        b->n_w++;
        if (!w->path || !w->name)
            rc = lc_cli_fail("sim", "out of memory");
    }
    lc_scenario_reader_free(&rd);
    lc_scenario_header_free(&h);
    free(text);
    return rc;
}

static int visible(const struct dirent *e) { return e->d_name[0] != '.'; }

/* Every *.jsonl below dir, in byte order of the names (the C locale's
 * alphasort); rel: dir's path below the DIR given. */
static int scan_dir(batch *b, const char *dir, const char *rel)
{
    struct dirent **e;
    int n = scandir(dir, &e, visible, alphasort), rc = 0;
    if (n < 0)
        return lc_cli_usage_error("sim", "cannot read %s: %s", dir, strerror(errno));
    for (int i = 0; i < n; i++) {
        const char *name = e[i]->d_name;
        char *path = NULL, *sub = NULL;
        if (!rc && (!(path = joined(dir, name)) || !(sub = joined(rel, name))))
            rc = lc_cli_fail("sim", "out of memory");
        else if (!rc && is_dir(path))
            rc = scan_dir(b, path, sub);
        else if (!rc && has_suffix(name, ".jsonl"))
            rc = load_world(b, path, sub);
        free(path);
        free(sub);
        free(e[i]);
    }
    free(e);
    return rc;
}

static int load_inputs(batch *b, char **argv, const int *in, int n_in)
{
    for (int k = 0; k < n_in; k++) {
        const char *a = argv[in[k]];
        struct stat st;
        if (stat(a, &st) < 0)
            return lc_cli_usage_error("sim", "cannot read %s: %s", a, strerror(errno));
        int before = b->n_w, rc;
        if (S_ISDIR(st.st_mode)) {
            rc = scan_dir(b, a, "");
            if (!rc && b->n_w == before)
                return lc_cli_usage_error("sim", "%s: no .jsonl scenario files in it", a);
        } else {
            const char *base = strrchr(a, '/');
            rc = load_world(b, a, base ? base + 1 : a);
        }
        if (rc)
            return rc;
    }
    return 0;
}

/* One run per world, model and seed, in file order. */
static int plan_runs(batch *b)
{
    for (int i = 0; i < b->n_w; i++) {
        for (int m = 0; m < 2; m++) {
            bool want = b->o.models ? (b->o.models >> m) & 1u : (int)b->w[i].model == m;
            for (long k = 0; want && k < b->o.seeds; k++) {
                if (LC_GROW(NULL, b->r, b->cap_r, b->n_r + 1) < 0)
                    return lc_cli_fail("sim", "out of memory");
                b->r[b->n_r++] = (brun){.world = i, .model = (lc_model)m,
                                        .seed = b->o.seed + (unsigned long long)k, .ratio = NAN};
            }
        }
    }
    return 0;
}

/* ------------------------------------------------------------ the runs */

static const char *model_name(lc_model m) { return m == LC_MODEL_UNICYCLE ? "unicycle" : "point"; }

static void svg_path(const batch *b, int run, char *out, size_t n)
{
    const brun *r = &b->r[run];
    char seed[40] = "";
    if (b->o.seeds > 1)
        snprintf(seed, sizeof seed, ".seed%llu", r->seed);
    snprintf(out, n, "%s/%s.%s%s.svg", b->o.svg_dir, b->w[r->world].name, model_name(r->model),
             seed);
}

/* In the child: the single-run path with its JSON on the pipe. */
static _Noreturn void run_child(const batch *b, int run)
{
    const brun *r = &b->r[run];
    char svg[PATH_TEXT_MAX], seed[32];
    char *argv[16];
    int n = 0;
    argv[n++] = (char *)"sim";
    argv[n++] = b->w[r->world].path;
    argv[n++] = (char *)"--json";
    argv[n++] = (char *)"--model";
    argv[n++] = (char *)model_name(r->model);
    snprintf(seed, sizeof seed, "%llu", r->seed);
    argv[n++] = (char *)"--seed";
    argv[n++] = seed;
    if (b->o.max_time) {
        argv[n++] = (char *)"--max-time";
        argv[n++] = (char *)b->o.max_time;
    }
    if (b->o.svg_dir) {
        svg_path(b, run, svg, sizeof svg);
        argv[n++] = (char *)"--svg";
        argv[n++] = svg;
    }
    argv[n] = NULL;
    int rc = lc_tool_sim(n, argv);
    fflush(stdout);
    fflush(stderr);
    _exit(rc);
}

static int start_job(const batch *b, job *j, int run)
{
    int out[2], err[2];
    if (pipe(out) < 0)
        return -1;
    if (pipe(err) < 0) {
        close(out[0]);
        close(out[1]);
        return -1;
    }
    fflush(stdout); /* or the child would write the parent's buffered text again */
    fflush(stderr);
    pid_t pid = fork();
    if (pid == 0) {
        close(out[0]);
        close(err[0]);
        if (dup2(out[1], STDOUT_FILENO) < 0 || dup2(err[1], STDERR_FILENO) < 0)
            _exit(LC_EXIT_FAIL);
        close(out[1]);
        close(err[1]);
        run_child(b, run);
    }
    close(out[1]);
    close(err[1]);
    if (pid < 0) {
        close(out[0]);
        close(err[0]);
        return -1;
    }
    *j = (job){.pid = pid, .run = run, .fd = {out[0], err[0]}};
    return 0;
}

/* Reads what is there on pipe k of j; closes it at the end. */
static void drain(job *j, int k)
{
    if (j->len[k] + 4097 > j->cap[k]) {
        size_t cap = j->cap[k] ? j->cap[k] * 2 : 8192;
        char *t = realloc(j->text[k], cap);
        if (t) {
            j->text[k] = t;
            j->cap[k] = cap;
        }
    }
    ssize_t got = -1;
    if (j->len[k] + 4097 <= j->cap[k]) {
        do
            got = read(j->fd[k], j->text[k] + j->len[k], 4096);
        while (got < 0 && errno == EINTR);
    }
    if (got > 0) {
        j->len[k] += (size_t)got;
        j->text[k][j->len[k]] = '\0';
        return;
    }
    close(j->fd[k]);
    j->fd[k] = -1;
}

static void progress(batch *b, int finished, int failed)
{
    if (!isatty(STDERR_FILENO))
        return;
    fprintf(stderr, "\rlacuna sim: %d of %d runs, %d failed", finished, b->n_r, failed);
    b->progress = true;
}

/* Why a child gave no result, from its exit status and stderr. */
static void report_error(batch *b, const job *j, int status)
{
    const brun *r = &b->r[j->run];
    char why[256] = "no result";
    if (WIFSIGNALED(status))
        snprintf(why, sizeof why, "killed by signal %d", WTERMSIG(status));
    else if (j->len[1]) {
        size_t n = strcspn(j->text[1], "\n");
        snprintf(why, sizeof why, "%.*s", (int)(n < 200 ? n : 200), j->text[1]);
    }
    fprintf(stderr, "%slacuna sim: %s as %s, seed %llu: %s\n", b->progress ? "\n" : "",
            b->w[r->world].path, model_name(r->model), r->seed, why);
    b->progress = false;
}

static bool read_result(brun *r, const char *text)
{
    cJSON *j = text ? cJSON_Parse(text) : NULL;
    const cJSON *out = cJSON_GetObjectItemCaseSensitive(j, "outcome"),
                *ok = cJSON_GetObjectItemCaseSensitive(j, "ok"),
                *col = cJSON_GetObjectItemCaseSensitive(j, "collisions"),
                *t = cJSON_GetObjectItemCaseSensitive(j, "sim_time");
    bool good = cJSON_IsString(out) && cJSON_IsBool(ok) && cJSON_IsNumber(col) &&
                cJSON_IsNumber(t);
    if (good) {
        snprintf(r->outcome, sizeof r->outcome, "%s", out->valuestring);
        r->ok = cJSON_IsTrue(ok);
        r->collisions = col->valueint;
        r->sim_time = t->valuedouble;
    }
    cJSON_Delete(j);
    return good;
}

/* A finished child: its run's figures (or "error"), its SVG kept on failure. */
static void finish(batch *b, job *j, int status)
{
    brun *r = &b->r[j->run];
    const bworld *w = &b->w[r->world];
    bool exited = WIFEXITED(status) && (WEXITSTATUS(status) == LC_EXIT_OK ||
                                        WEXITSTATUS(status) == LC_EXIT_FAIL);
    if (!exited || !read_result(r, j->text[0])) {
        snprintf(r->outcome, sizeof r->outcome, "error");
        r->ok = false;
        report_error(b, j, status);
    }
    if (strcmp(r->outcome, "done") == 0 && w->shortest_path > 0 && w->v_max > 0)
        r->ratio = r->sim_time / (w->shortest_path / w->v_max);
    if (b->o.svg_dir && r->ok) {
        char svg[PATH_TEXT_MAX];
        svg_path(b, j->run, svg, sizeof svg);
        unlink(svg);
    }
    free(j->text[0]);
    free(j->text[1]);
    *j = (job){0};
}

/* The poll set of the running jobs' open pipes; owner[i] the job of pf[i]. */
static int poll_set(job *js, int n, struct pollfd *pf, int *owner, int *pipe_of)
{
    int np = 0;
    for (int i = 0; i < n; i++)
        for (int k = 0; js[i].pid && k < 2; k++)
            if (js[i].fd[k] >= 0) {
                pf[np] = (struct pollfd){.fd = js[i].fd[k], .events = POLLIN};
                owner[np] = i;
                pipe_of[np++] = k;
            }
    return np;
}

static int run_all(batch *b)
{
    int n = (int)(b->o.jobs < b->n_r ? b->o.jobs : b->n_r), next = 0, finished = 0, failed = 0;
    job *js = calloc((size_t)n, sizeof *js);
    struct pollfd *pf = calloc((size_t)(2 * n), sizeof *pf);
    int *owner = calloc((size_t)(2 * n), sizeof *owner), *pipe_of = calloc((size_t)(2 * n),
                                                                           sizeof *pipe_of);
    int rc = js && pf && owner && pipe_of ? 0 : lc_cli_fail("sim", "out of memory");
    while (!rc && finished < b->n_r) {
        for (int i = 0; i < n && next < b->n_r; i++)
            if (!js[i].pid && start_job(b, &js[i], next++) < 0)
                rc = lc_cli_fail("sim", "cannot start a run: %s", strerror(errno));
        int np = poll_set(js, n, pf, owner, pipe_of);
        if (np && poll(pf, (nfds_t)np, -1) < 0 && errno != EINTR)
            rc = lc_cli_fail("sim", "poll: %s", strerror(errno));
        for (int i = 0; !rc && i < np; i++)
            if (pf[i].revents)
                drain(&js[owner[i]], pipe_of[i]);
        for (int i = 0; i < n; i++) {
            int status;
            if (!js[i].pid || js[i].fd[0] >= 0 || js[i].fd[1] >= 0 ||
                waitpid(js[i].pid, &status, 0) != js[i].pid)
                continue;
            int run = js[i].run;
            finish(b, &js[i], status);
            failed += !b->r[run].ok;
            finished++;
            progress(b, finished, failed);
        }
    }
    for (int i = 0; js && i < n; i++) /* only after a failure of our own */
        if (js[i].pid) {
            kill(js[i].pid, SIGTERM);
            waitpid(js[i].pid, NULL, 0);
            for (int k = 0; k < 2; k++) {
                if (js[i].fd[k] >= 0)
                    close(js[i].fd[k]);
                free(js[i].text[k]);
            }
        }
    if (b->progress)
        fputc('\n', stderr);
    free(js);
    free(pf);
    free(owner);
    free(pipe_of);
    return rc;
}

/* ------------------------------------------------------------ figures */

typedef struct figures {
    int runs, done, collisions, blocked, other, ok;
    double done_low, done_high;       /* 95 % interval of the share done */
    double median_time, median_ratio; /* over the runs done; NAN when none */
} figures;

/*
 * The Wilson score interval of a share k / n at confidence z (1.96 for
 * 95 %): E. B. Wilson, "Probable inference, the law of succession, and
 * statistical inference", JASA 22 (1927) 209-212. Unlike p +- z sqrt(p (1 -
 * p) / n) it stays within [0, 1] and is not empty at 0 or n runs done,
 * which is where a suite of worlds mostly is (see simbatch.h).
 */
void lc_share_interval(int k, int n, double z, double *low, double *high)
{
    if (n <= 0 || k < 0 || k > n) {
        *low = NAN;
        *high = NAN;
        return;
    }
    double p = (double)k / n, z2n = z * z / n;
    double centre = (p + 0.5 * z2n) / (1.0 + z2n);
    double half = z * sqrt(p * (1.0 - p) / n + 0.25 * z2n / n) / (1.0 + z2n);
    *low = k == 0 ? 0.0 : lc_max(0.0, centre - half);
    *high = k == n ? 1.0 : lc_min(1.0, centre + half);
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double median(double *v, int n)
{
    if (n == 0)
        return NAN;
    qsort(v, (size_t)n, sizeof *v, cmp_double);
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

/* The runs of model m in family (NULL: every family); scratch: 2 n_r doubles. */
static figures tally(const batch *b, const char *family, lc_model m, double *scratch)
{
    figures f = {0};
    int nt = 0, nr = 0;
    double *t = scratch, *ratio = scratch + b->n_r;
    for (int i = 0; i < b->n_r; i++) {
        const brun *r = &b->r[i];
        if (r->model != m || (family && strcmp(b->w[r->world].family, family) != 0))
            continue;
        f.runs++;
        f.ok += r->ok;
        f.collisions += r->collisions;
        if (strcmp(r->outcome, "done") == 0) {
            f.done++;
            t[nt++] = r->sim_time;
            if (!isnan(r->ratio))
                ratio[nr++] = r->ratio;
        } else if (strcmp(r->outcome, "blocked") == 0) {
            f.blocked++;
        } else {
            f.other++;
        }
    }
    f.median_time = median(t, nt);
    f.median_ratio = median(ratio, nr);
    lc_share_interval(f.done, f.runs, LC_SHARE_Z95, &f.done_low, &f.done_high);
    return f;
}

/* The distinct families, sorted ("" for files without one); NULL: no memory. */
static const char **families(const batch *b, int *n)
{
    const char **f = malloc((size_t)b->n_w * sizeof *f);
    *n = 0;
    if (!f)
        return NULL;
    for (int i = 0; i < b->n_w; i++)
        f[i] = b->w[i].family;
    qsort(f, (size_t)b->n_w, sizeof *f, cmp_str);
    for (int i = 0; i < b->n_w; i++)
        if (*n == 0 || strcmp(f[*n - 1], f[i]) != 0)
            f[(*n)++] = f[i];
    return f;
}

static void print_row(int width, const char *family, lc_model m, const figures *f)
{
    char t[32] = "-", r[32] = "-", share[32] = "-";
    if (!isnan(f->median_time))
        snprintf(t, sizeof t, "%.1f", f->median_time);
    if (!isnan(f->median_ratio))
        snprintf(r, sizeof r, "%.2f", f->median_ratio);
    if (!isnan(f->done_low)) /* whole percent, rounded outward */
        snprintf(share, sizeof share, "%.0f-%.0f", floor(100.0 * f->done_low + 1e-9),
                 ceil(100.0 * f->done_high - 1e-9));
    printf("%-*s %-8s %5d %5d %10d %7d %5d %8s %12s %8s\n", width, family[0] ? family : "-",
           model_name(m), f->runs, f->done, f->collisions, f->blocked, f->other, t, r, share);
}

static void print_table(const batch *b, const char **fam, int n_fam, double *scratch)
{
    int width = 6, ok = 0;
    for (int i = 0; i < n_fam; i++)
        width = (int)strlen(fam[i]) > width ? (int)strlen(fam[i]) : width;
    printf("%-*s %-8s %5s %5s %10s %7s %5s %8s %12s %8s\n", width, "family", "model", "runs",
           "done", "collisions", "blocked", "other", "median_s", "median_ratio", "done_95%");
    for (int i = 0; i <= n_fam; i++)
        for (int m = 0; m < 2; m++) {
            figures f = tally(b, i < n_fam ? fam[i] : NULL, (lc_model)m, scratch);
            if (f.runs)
                print_row(width, i < n_fam ? fam[i] : "all", (lc_model)m, &f);
        }
    for (int i = 0; i < b->n_r; i++)
        ok += b->r[i].ok;
    printf("%d run%s: %d met their expectation without a collision, %d did not.\n"
           "Medians over the runs done; ratio = time / (shortest_path / v_max).\n"
           "done_95%%: the share done, its 95 %% interval (Wilson score) in percent.\n",
           b->n_r, b->n_r == 1 ? "" : "s", ok, b->n_r - ok);
}

/* x rounded to 6 decimals as `lacuna sim` prints it; null for NAN. */
static void add_num(cJSON *o, const char *key, double x)
{
    char buf[LC_WIRE_NUMBER_MAX];
    if (isnan(x) || isinf(x)) {
        cJSON_AddNullToObject(o, key);
        return;
    }
    lc_wire_format_number(buf, x, 6);
    cJSON_AddNumberToObject(o, key, strtod(buf, NULL));
}

static void add_family(cJSON *o, const char *family)
{
    if (family[0])
        cJSON_AddStringToObject(o, "family", family);
    else
        cJSON_AddNullToObject(o, "family");
}

static cJSON *figures_json(const char *family, lc_model m, const figures *f)
{
    cJSON *o = cJSON_CreateObject();
    if (family)
        add_family(o, family);
    cJSON_AddStringToObject(o, "model", model_name(m));
    const int counts[] = {f->runs, f->done, f->collisions, f->blocked, f->other, f->ok};
    static const char *const names[] = {"runs", "done", "collisions", "blocked", "other", "ok"};
    for (int i = 0; i < 6; i++)
        cJSON_AddNumberToObject(o, names[i], counts[i]);
    add_num(o, "done_low", f->done_low);
    add_num(o, "done_high", f->done_high);
    add_num(o, "median_time", f->median_time);
    add_num(o, "median_ratio", f->median_ratio);
    return o;
}

static cJSON *run_json(const batch *b, const brun *r)
{
    const bworld *w = &b->w[r->world];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "file", w->path);
    add_family(o, w->family);
    cJSON_AddStringToObject(o, "model", model_name(r->model));
    char seed[32]; /* exact: a double holds whole numbers to 2^53 only */
    snprintf(seed, sizeof seed, "%llu", r->seed);
    cJSON_AddRawToObject(o, "seed", seed);
    cJSON_AddStringToObject(o, "outcome", r->outcome);
    cJSON_AddBoolToObject(o, "ok", r->ok);
    cJSON_AddNumberToObject(o, "collisions", r->collisions);
    add_num(o, "sim_time", strcmp(r->outcome, "error") ? r->sim_time : NAN);
    add_num(o, "shortest_path", w->shortest_path > 0 ? w->shortest_path : NAN);
    add_num(o, "ratio", r->ratio);
    return o;
}

static int print_json(const batch *b, const char **fam, int n_fam, double *scratch)
{
    int ok = 0;
    for (int i = 0; i < b->n_r; i++)
        ok += b->r[i].ok;
    cJSON *root = cJSON_CreateObject();
    cJSON_AddNumberToObject(root, "count", b->n_r);
    cJSON_AddNumberToObject(root, "ok", ok);
    cJSON *groups = cJSON_AddArrayToObject(root, "groups"),
          *totals = cJSON_AddArrayToObject(root, "totals"),
          *runs = cJSON_AddArrayToObject(root, "runs");
    for (int i = 0; i <= n_fam; i++)
        for (int m = 0; m < 2; m++) {
            figures f = tally(b, i < n_fam ? fam[i] : NULL, (lc_model)m, scratch);
            if (f.runs)
                cJSON_AddItemToArray(i < n_fam ? groups : totals,
                                     figures_json(i < n_fam ? fam[i] : NULL, (lc_model)m, &f));
        }
    for (int i = 0; i < b->n_r; i++)
        cJSON_AddItemToArray(runs, run_json(b, &b->r[i]));
    char *text = cJSON_PrintUnformatted(root);
    cJSON_Delete(root);
    if (!text)
        return lc_cli_fail("sim", "out of memory");
    puts(text);
    free(text);
    return 0;
}

/* The table or the JSON; 0 when every run met its expectation, else 1. */
static int report(const batch *b)
{
    int n_fam, rc = 0;
    const char **fam = families(b, &n_fam);
    double *scratch = malloc(2 * (size_t)b->n_r * sizeof *scratch);
    if (!fam || !scratch)
        rc = lc_cli_fail("sim", "out of memory");
    else if (b->o.json)
        rc = print_json(b, fam, n_fam, scratch);
    else
        print_table(b, fam, n_fam, scratch);
    free(fam);
    free(scratch);
    for (int i = 0; !rc && i < b->n_r; i++)
        rc = b->r[i].ok ? 0 : LC_EXIT_FAIL;
    return rc;
}

/* ------------------------------------------------------------ entry */

static int check_svg_dir(const char *dir)
{
    if (!dir)
        return 0;
    if (mkdir(dir, 0777) < 0 && errno != EEXIST)
        return lc_cli_usage_error("sim", "--svg-dir: cannot make %s: %s", dir, strerror(errno));
    if (!is_dir(dir) || access(dir, W_OK) < 0)
        return lc_cli_usage_error("sim", "--svg-dir: %s is not a directory we can write to",
                                  dir);
    return 0;
}

int lc_sim_batch(int argc, char **argv)
{
    batch b = {0};
    int n_in = 0, *in = calloc((size_t)argc, sizeof *in);
    int rc = in ? parse_args(argc, argv, &b, in, &n_in) : lc_cli_fail("sim", "out of memory");
    if (!rc)
        rc = check_svg_dir(b.o.svg_dir);
    if (!rc)
        rc = load_inputs(&b, argv, in, n_in);
    if (!rc)
        rc = plan_runs(&b);
    if (!rc && b.n_r == 0)
        rc = lc_cli_usage_error("sim", "no runs");
    if (!rc)
        rc = run_all(&b);
    if (!rc)
        rc = report(&b);
    for (int i = 0; i < b.n_w; i++) {
        free(b.w[i].path);
        free(b.w[i].name);
    }
    free(b.w);
    free(b.r);
    free(in);
    return rc;
}
