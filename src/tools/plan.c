/* plan.c - `lacuna plan`: placeholder until the codec lands (being written now). */
#include "cli.h"

const char lc_plan_usage[] = "usage: lacuna plan [FILE|-]\n";

int lc_tool_plan(int argc, char **argv) { return lc_cli_fail("plan", "not built yet"); }
