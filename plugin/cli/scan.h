/*
  `plumb scan`: every take through the plugin, then the summary.
*/
#ifndef PLUMB_CLI_SCAN_H
#define PLUMB_CLI_SCAN_H

/* argv[0] is "scan". Returns the exit status. */
int scan_main(int argc, char **argv);

#endif
