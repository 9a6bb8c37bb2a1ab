-- ardour7-lua, first run: create a session, put plumb on an audio track,
-- record three steady notes from the Dummy backend's sine generators,
-- set the tolerance, save.
--   ardour7-lua ardour_record.lua COMMON.lua SESSION_DIR SESSION_NAME
-- Prints "plumb-check KEY VALUE" lines for tests/hosts/workstation/ardour.sh.
dofile(arg[1])
local session_dir, session_name = arg[2], arg[3]

-- The three notes, in the order they are recorded: Dummy capture ports
-- 5, 6 and 4 (1000, 1259.9 and 793.7 Hz, see ardour_common.lua), each
-- held for NOTE_S seconds of audio, with SILENCE_S of silence around them.
local NOTE_PORTS = { "system:capture_5", "system:capture_6", "system:capture_4" }
local NOTE_S = 4.0
local SILENCE_S = 3.0
-- Not the default 10 (docs/ports.md). The generator's sines are all
-- 21.31 cents sharp (ardour_logs.py), so 25 turns their verdict round.
local TOLERANCE_CENTS = 25
local LABEL_PRESET = "plumb check: take label" -- lv2/plumb-check-label.lv2

local backend = start_dummy_backend()
-- Ardour's default monitoring model, ExternalMonitoring, leaves input
-- monitoring to the sound card, so the track's plugins would hear
-- silence while it records. Software monitoring runs the input
-- through them, as a workstation set up for recording does.
ARDOUR.config():set_monitoring_model(ARDOUR.MonitorModel.SoftwareMonitoring)
assert(create_session(session_dir, session_name, SAMPLE_RATE_HZ), "create_session failed")
report("sample_rate_hz", Session:nominal_sample_rate())
report("block_frames", Session:get_block_size())
report("backend_buffer_frames", backend:buffer_size())

-- No input auto-connection: Ardour would connect capture_1 from a thread
-- of its own, at a moment this script cannot see. Silence until the
-- first note.
local track = Session:new_audio_track(1, 2, nil, 1, "Harbour", ARDOUR.PresentationInfo.max_order,
  ARDOUR.TrackMode.Normal, false):front()
local input = track:input():audio(0)

-- new_plugin applies the preset before the insert exists: the plugin's
-- restore() runs while it is not active, never with run(), as LV2 asks.
local proc = ARDOUR.LuaAPI.new_plugin(Session, PLUMB_URI, ARDOUR.PluginType.LV2, LABEL_PRESET)
assert(not proc:isnil(), "new_plugin found no " .. PLUMB_URI)
assert(track:add_processor_by_index(proc, 0, nil, true) == 0, "add_processor_by_index failed")
report("preset", proc:to_insert():plugin(0):last_preset().label)

-- The plugin sits before the fader; the fader at -6 dB keeps the export
-- quieter still than the -18 dBFS generator.
track:gain_control():set_value(ARDOUR.DSP.dB_to_coefficient(-6), PBD.GroupControlDisposition.NoGroup)

track:rec_enable_control():set_value(1, PBD.GroupControlDisposition.NoGroup)
Session:maybe_enable_record(false)
Session:request_roll(ARDOUR.TransportRequestSource.TRS_UI)
report("rolling", wait_until(function() return Session:actively_recording() end, 10))

sleep_audio(SILENCE_S)
for _, port in ipairs(NOTE_PORTS) do
  input:disconnect_all()
  input:connect(port)
  report("note_from", port)
  sleep_audio(NOTE_S)
end
input:disconnect_all()
sleep_audio(SILENCE_S)

Session:request_stop(false, false, ARDOUR.TransportRequestSource.TRS_UI)
report("stopped", wait_until(function() return Session:transport_stopped() end, 10))
report("recorded_end_sample", Session:current_end_sample())

-- Disarmed, the reopened session plays the take back from disk.
track:rec_enable_control():set_value(0, PBD.GroupControlDisposition.NoGroup)
set_control(proc, TOLERANCE_PORT, TOLERANCE_CENTS)
report("tolerance_before_save", get_control(proc, TOLERANCE_PORT))
report("save_state", Session:save_state("", false, false, false, false, false))
close_session()
report("closed", true)
