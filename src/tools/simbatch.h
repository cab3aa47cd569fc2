/*
 * simbatch.h - `lacuna sim FILE... | DIR`: many scenarios at once, a table
 * per family and model.
 *
 * Each run is one `lacuna sim FILE --json --model M` in a child process
 * (fork, the single-run path unchanged), N at a time; the parent reads
 * each child's JSON result and its exit status, and groups the runs by the
 * header's "family". The families and times are the headers' own: a run's
 * ratio is its time over shortest_path / v_max (scenario.h), for runs that
 * finished their route.
 */
#ifndef LC_SIMBATCH_H
#define LC_SIMBATCH_H

#include <stdbool.h>

/* True when argv (argv[0] "sim") asks for a batch: several scenario files,
 * a directory, --jobs, --svg-dir or --model both. */
bool lc_sim_batch_wanted(int argc, char **argv);

/*
 * The Wilson score interval of the share k / n at confidence z (z standard
 * deviations, LC_SHARE_Z95 for 95 %): *low and *high within [0, 1]; NAN
 * for n < 1 or k outside 0..n. The batch prints it for the share of runs
 * done: 51 of 60 is 74-92 %, so two suites of 60 worlds that differ by
 * three runs done do not tell two planners apart (`--seeds` runs each
 * world more than once).
 */
#define LC_SHARE_Z95 1.959964
void lc_share_interval(int k, int n, double z, double *low, double *high);

/* Runs the batch; exit 0 when every run met its header's expectation
 * without a collision, 1 otherwise, 2 on bad usage or a bad file. */
int lc_sim_batch(int argc, char **argv);

#endif
