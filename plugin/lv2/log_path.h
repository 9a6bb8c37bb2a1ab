/*
  plumb LV2: where the session log goes and what its files are called.

  [non-RT]: these read the environment, the clock and the file system.
  They run in instantiate() and on the log writer thread, never in run().
*/
#ifndef PLUMB_LV2_LOG_PATH_H
#define PLUMB_LV2_LOG_PATH_H

#include <lv2/state/state.h>

#include <stddef.h>
#include <time.h>

#define LOG_PATH_STEM_MAX 100 /* characters kept from a take label (PLUMB_LOG_STEM_MAX) */

/* The folder used when the plugin has no logFolder parameter:
   $PLUMB_LOG_DIR, else $XDG_STATE_HOME/plumb (an absolute
   $XDG_STATE_HOME only, as the XDG base directory specification asks),
   else $HOME/.local/state/plumb, else the same under the password
   database's home. Returns 0, or -1 when none fits in size. */
int log_path_default_folder(char *folder, size_t size);

/* The folder the host's state:makePath gives for "plumb-logs" (inside
   the session), copied into folder; the host's string is freed with
   free_path, or free() when free_path is NULL. Call it from the writer
   thread only, never in instantiate() or run(). Returns 0, or -1 when
   the host gave no path, a relative one, or one that does not fit. */
int log_path_session_folder(const LV2_State_Make_Path *make_path,
                            const LV2_State_Free_Path *free_path,
                            char *folder, size_t size);

/* The file stem for a take label: bytes outside [A-Za-z0-9._-] become
   '_' (one '_' for each UTF-8 character), a leading '.' becomes '_' so
   the files are never hidden, and at most LOG_PATH_STEM_MAX characters
   are kept. stem needs LOG_PATH_STEM_MAX + 1 bytes. Returns the length;
   0 means the label gives no stem (use log_path_automatic_stem). */
size_t log_path_sanitise_label(const char *label, char *stem);

/* take-YYYYmmdd-HHMMSS-<pid>-<n> with the UTC time `now`, the process id
   and n counting the takes this process has started (1, 2 ...), so two
   instances never get the same stem. stem needs LOG_PATH_STEM_MAX + 1. */
void log_path_automatic_stem(time_t now, char *stem);

/* folder/stem + suffix into path. Returns 0, or -1 if it does not fit. */
int log_path_join(char *path, size_t size, const char *folder, const char *stem,
                  const char *suffix);

/* mkdir -p: makes folder and its missing parents (mode 0777 less the
   umask). Returns 0, or the errno of the step that failed. */
int log_path_make_folders(const char *folder);

#endif /* PLUMB_LV2_LOG_PATH_H */
