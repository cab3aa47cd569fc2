/* testutil.c - see testutil.h. */
#include "testutil.h"

#include <dirent.h>

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

const char *lc_test_source_path(const char *rel)
{
    static char buf[4096];
    const char *root = getenv("LACUNA_SOURCE_ROOT");
    snprintf(buf, sizeof buf, "%s/%s", root ? root : ".", rel);
    return buf;
}

static int cmp_path(const void *a, const void *b) { return strcmp(a, b); }

int lc_test_jsonl_files(const char *rel, char (*paths)[LC_TEST_PATH_MAX], int max)
{
    char dir[LC_TEST_PATH_MAX];
    snprintf(dir, sizeof dir, "%s", lc_test_source_path(rel));
    DIR *d = opendir(dir);
    if (!d)
        return -1;
    int n = 0;
    struct dirent *e;
    while ((e = readdir(d)) && n < max) {
        size_t len = strlen(e->d_name);
        if (len >= 6 && strcmp(e->d_name + len - 6, ".jsonl") == 0)
            snprintf(paths[n++], LC_TEST_PATH_MAX, "%.700s/%.300s", dir, e->d_name);
    }
    closedir(d);
    qsort(paths, (size_t)n, sizeof *paths, cmp_path);
    return n;
}
