/*
  plumb: the command-line host of the plumb LV2 plugin.

  `plumb scan` runs recorded takes through the very plugin binary a
  workstation loads, `plumb report` reads the logs back, `plumb ensemble`
  compares the tracks of one take with one another. See
  docs/command.md.
*/
#include "ensemble_main.h"
#include "exit_status.h"
#include "options.h"
#include "plumb.h"
#include "progress.h"
#include "report.h"
#include "scan.h"

#include <stdio.h>
#include <string.h>

int main(int argc, char **argv) {
  if (argc < 2) {
    console_error("no command given: plumb scan FILE... or plumb report DIR "
                  "(plumb --help)");
    return EXIT_STATUS_USAGE;
  }
  const char *command = argv[1];
  if (strcmp(command, "scan") == 0) {
    return scan_main(argc - 1, argv + 1);
  }
  if (strcmp(command, "ensemble") == 0) {
    return ensemble_main(argc - 1, argv + 1);
  }
  if (strcmp(command, "report") == 0) {
    return report_main(argc - 1, argv + 1);
  }
  if (strcmp(command, "--help") == 0 || strcmp(command, "-h") == 0) {
    options_print_usage(stdout);
    return EXIT_STATUS_DONE;
  }
  if (strcmp(command, "--version") == 0) {
    printf("plumb %s\n", PLUMB_VERSION);
    return EXIT_STATUS_DONE;
  }
  console_error("unknown command '%s' (plumb --help lists them)", command);
  return EXIT_STATUS_USAGE;
}
