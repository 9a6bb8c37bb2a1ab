#include "host_uris.h"

#include <lv2/atom/atom.h>
#include <lv2/buf-size/buf-size.h>
#include <lv2/log/log.h>
#include <lv2/parameters/parameters.h>
#include <lv2/patch/patch.h>
#include <lv2/time/time.h>

static void map_one(urid_table *table, const char *uri, LV2_URID *urid,
                    bool *ok) {
  *urid = urid_table_map(table, uri);
  *ok = *ok && *urid != 0;
}

bool host_uris_map(host_uris *uris, urid_table *table) {
  bool ok = true;
  map_one(table, LV2_ATOM__Chunk, &uris->atom_Chunk, &ok);
  map_one(table, LV2_ATOM__Float, &uris->atom_Float, &ok);
  map_one(table, LV2_ATOM__Int, &uris->atom_Int, &ok);
  map_one(table, LV2_ATOM__Long, &uris->atom_Long, &ok);
  map_one(table, LV2_ATOM__Object, &uris->atom_Object, &ok);
  map_one(table, LV2_ATOM__Sequence, &uris->atom_Sequence, &ok);
  map_one(table, LV2_PATCH__Set, &uris->patch_Set, &ok);
  map_one(table, LV2_PATCH__property, &uris->patch_property, &ok);
  map_one(table, LV2_PATCH__value, &uris->patch_value, &ok);
  map_one(table, PLUMB_URI_LOG_FOLDER, &uris->plumb_logFolder, &ok);
  map_one(table, PLUMB_URI_TAKE_LABEL, &uris->plumb_takeLabel, &ok);
  map_one(table, PLUMB_URI_CUSTOM_OFFSETS, &uris->plumb_customOffsets, &ok);
  map_one(table, PLUMB_URI_SOURCE_FILE, &uris->plumb_sourceFile, &ok);
  map_one(table, PLUMB_URI_SOURCE_CHANNEL, &uris->plumb_sourceChannel, &ok);
  map_one(table, LV2_PARAMETERS__sampleRate, &uris->param_sampleRate, &ok);
  map_one(table, LV2_BUF_SIZE__minBlockLength, &uris->bufsz_minBlockLength,
          &ok);
  map_one(table, LV2_BUF_SIZE__maxBlockLength, &uris->bufsz_maxBlockLength,
          &ok);
  map_one(table, LV2_BUF_SIZE__nominalBlockLength,
          &uris->bufsz_nominalBlockLength, &ok);
  map_one(table, LV2_LOG__Note, &uris->log_Note, &ok);
  map_one(table, LV2_LOG__Trace, &uris->log_Trace, &ok);
  map_one(table, LV2_TIME__Position, &uris->time_Position, &ok);
  map_one(table, LV2_TIME__frame, &uris->time_frame, &ok);
  map_one(table, LV2_TIME__speed, &uris->time_speed, &ok);
  map_one(table, LV2_TIME__bar, &uris->time_bar, &ok);
  map_one(table, LV2_TIME__barBeat, &uris->time_barBeat, &ok);
  map_one(table, LV2_TIME__beatsPerBar, &uris->time_beatsPerBar, &ok);
  map_one(table, LV2_TIME__beatUnit, &uris->time_beatUnit, &ok);
  map_one(table, LV2_TIME__beatsPerMinute, &uris->time_beatsPerMinute, &ok);
  return ok;
}
