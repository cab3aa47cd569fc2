/* main.c - the `lacuna` command: dispatches subcommands (see cli.h). */
#include "cli.h"

int main(int argc, char **argv) { return lc_cli_main(argc, argv); }
