/* testutil.c - see testutil.h. */
#include "testutil.h"

#include <dirent.h>
#include <sys/wait.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>


void lc_test_assert_near(double a, double b, double tol, const char *sa, const char *sb,
                         const char *file, int line)
{
    if (isnan(a) || isnan(b) || !(fabs(a - b) <= tol)) {
        print_error("%s = %.17g is not within %.3g of %s = %.17g\n", sa, a, tol, sb, b);
        _fail(file, line);
    }
}

uint64_t lc_rng_next(lc_rng *r)
{
    uint64_t z = (r->s += 0x9e3779b97f4a7c15ull);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
}

void lc_test_random_convex(lc_rng *g, lc_vec2 c, double r, int n, lc_vec2 *v)
{
    double ang[256];
    assert_true(n >= 0 && n <= 256);
    for (int i = 0; i < n; i++)
        ang[i] = lc_rng_uniform(g, 0.0, 2.0 * LC_PI);
    for (int i = 1; i < n; i++)
        for (int j = i; j > 0 && ang[j - 1] > ang[j]; j--) {
            double t = ang[j];
            ang[j] = ang[j - 1];
            ang[j - 1] = t;
        }
    for (int i = 0; i < n; i++)
        v[i] = lc_add(c, lc_scale(lc_unit_angle(ang[i]), r));
}



double lc_rng_uniform(lc_rng *r, double lo, double hi)
{
    return lo + (hi - lo) * ((double)(lc_rng_next(r) >> 11) * 0x1.0p-53);
}

double lc_rng_normal(lc_rng *r)
{
    double u = lc_rng_uniform(r, 1e-300, 1.0), v = lc_rng_uniform(r, 0.0, 1.0);
    return sqrt(-2.0 * log(u)) * cos(2.0 * LC_PI * v);
}

static void *counting_realloc(void *data, void *p, size_t n)
{
    lc_counting_alloc *c = data;
    if (n == 0) {
        if (p) {
            c->frees++;
            c->live--;
        }
        free(p);
        return NULL;
    }
    c->calls++;
    void *q = realloc(p, n);
    if (q && !p)
        c->live++;
    return q;
}

void lc_counting_alloc_init(lc_counting_alloc *c)
{
    c->alloc.realloc = counting_realloc;
    c->alloc.data = c;
    c->calls = c->frees = c->live = 0;
}

/* Tests skipped so far in this process (cmocka runs them one after another). */
static size_t skipped;

void lc_test_count_skip(const char *why)
{
    fprintf(stderr, "skipped: %s\n", why);
    skipped++;
}

int lc_test_group_result(int failed, size_t tests)
{
    return failed == 0 && tests > 0 && skipped == tests ? 77 : failed;
}

void lc_test_skip_without_geos(void **state)
{
    LC_TEST_SKIP("GEOS not found at build time: this comparison with GEOS did not run");
}


const char *lc_test_source_path(const char *rel)
{
    static char buf[4096];
    const char *root = getenv("LACUNA_SOURCE_ROOT");
    snprintf(buf, sizeof buf, "%s/%s", root ? root : ".", rel);
    return buf;
}

static int cmp_path(const void *a, const void *b) { return strcmp(a, b); }

int lc_test_files(const char *rel, const char *suffix, char (*paths)[LC_TEST_PATH_MAX], int max)
{
    char dir[LC_TEST_PATH_MAX];
    snprintf(dir, sizeof dir, "%s", lc_test_source_path(rel));
    DIR *d = opendir(dir);
    if (!d)
        return -1;
    int n = 0;
    size_t k = strlen(suffix);
    struct dirent *e;
    while ((e = readdir(d)) && n < max) {
        size_t len = strlen(e->d_name);
        if (len >= k && strcmp(e->d_name + len - k, suffix) == 0)
            snprintf(paths[n++], LC_TEST_PATH_MAX, "%.700s/%.300s", dir, e->d_name);
    }
    closedir(d);
    qsort(paths, (size_t)n, sizeof *paths, cmp_path);
    return n;
}

int lc_test_jsonl_files(const char *rel, char (*paths)[LC_TEST_PATH_MAX], int max)
{
    return lc_test_files(rel, ".jsonl", paths, max);
}

/* The temporary directory: empty until lc_test_tmpdir_setup made one. */
static char tmpdir[256];

int lc_test_tmpdir_setup(const char *prefix)
{
    int n = snprintf(tmpdir, sizeof tmpdir, "%sXXXXXX", prefix);
    if (n < 0 || (size_t)n >= sizeof tmpdir || strchr(prefix, '\'') || !mkdtemp(tmpdir)) {
        tmpdir[0] = '\0';
        return -1;
    }
    return 0;
}

int lc_test_tmpdir_teardown(void **state)
{
    if (!tmpdir[0])
        return 0;
    char cmd[sizeof tmpdir + 16];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", tmpdir);
    tmpdir[0] = '\0';
    return system(cmd) == 0 ? 0 : -1;
}

/* name inside the temporary directory into buf; fails the test when cut. */
static void tmp_path(char *buf, size_t size, const char *name)
{
    if (!tmpdir[0])
        fail_msg("no temporary directory: lc_test_tmpdir_setup first");
    int n = snprintf(buf, size, "%s/%s", tmpdir, name);
    if (n < 0 || (size_t)n >= size)
        fail_msg("temporary path too long: %s/%s", tmpdir, name);
}

const char *lc_test_tmp(const char *name)
{
    static char buf[4][LC_TEST_PATH_MAX];
    static int k;
    k = (k + 1) % 4;
    tmp_path(buf[k], sizeof buf[k], name);
    return buf[k];
}

int lc_test_lacuna(const char *args)
{
    const char *exe = getenv("LACUNA_EXE");
    assert_non_null(exe);
    char out[LC_TEST_PATH_MAX], err[LC_TEST_PATH_MAX], cmd[4096];
    tmp_path(out, sizeof out, "out.json");
    tmp_path(err, sizeof err, "err.txt");
    int n = snprintf(cmd, sizeof cmd, "'%s' %s >'%s' 2>'%s'", exe, args, out, err);
    if (n < 0 || (size_t)n >= sizeof cmd)
        fail_msg("command line too long (%d characters): %.200s ...", n, cmd);
    int rc = system(cmd);
    assert_true(WIFEXITED(rc));
    return WEXITSTATUS(rc);
}

void lc_test_refused(const char *args, const char *want)
{
    int rc = lc_test_lacuna(args);
    char *out = lc_test_slurp(lc_test_tmp("out.json")), *err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_true(out && err);
    size_t nl = strcspn(err, "\n");
    if (rc != 2 || out[0] || strncmp(err, want, strlen(want)) != 0 || err[nl] != '\n' ||
        err[nl + 1] != '\0')
        fail_msg("lacuna %s: exit %d, stdout '%.200s', stderr '%s' (want exit 2 and one line "
                 "'%s...')", args, rc, out, err, want);
    free(out);
    free(err);
}

char *lc_test_slurp_len(const char *path, size_t *len)
{
    FILE *f = fopen(path, "rb");
    if (!f)
        return NULL;
    char *s = NULL;
    long n = -1;
    if (fseek(f, 0, SEEK_END) == 0)
        n = ftell(f);
    if (n >= 0 && fseek(f, 0, SEEK_SET) == 0)
        s = malloc((size_t)n + 1);
    size_t got = s ? fread(s, 1, (size_t)n, f) : 0;
    if (s && ferror(f)) {
        free(s);
        s = NULL;
    }
    fclose(f);
    if (!s)
        return NULL;
    s[got] = '\0';
    if (len)
        *len = got;
    return s;
}

char *lc_test_slurp(const char *path) { return lc_test_slurp_len(path, NULL); }

void lc_test_write_file(const char *path, const char *text, size_t n)
{
    FILE *f = fopen(path, "wb");
    if (!f)
        fail_msg("cannot write %s", path);
    size_t put = fwrite(text, 1, n, f);
    int closed = fclose(f); /* a buffered write may fail only here */
    if (put != n || closed != 0)
        fail_msg("%s: not written whole (%zu of %zu bytes taken, close %d)", path, put, n,
                 closed);
}

const char *lc_test_unquote(const char *s, char *out, size_t n)
{
    size_t len = strlen(s);
    if (len >= n)
        fail_msg("test text longer than %zu bytes", n);
    for (size_t i = 0; i <= len; i++)
        out[i] = s[i] == '\'' ? '"' : s[i];
    return out;
}

bool lc_test_names_field(const char *msg, const char *field)
{
    size_t n = strlen(field);
    return strncmp(msg, field, n) == 0 && msg[n] == ':';
}
