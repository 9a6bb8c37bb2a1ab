/*
  `plumb report DIR`: the summary table from every <label>.notes.csv in
  DIR, in name order.
*/
#ifndef PLUMB_CLI_REPORT_H
#define PLUMB_CLI_REPORT_H

/* argv[0] is "report". Returns the exit status. */
int report_main(int argc, char **argv);

#endif
