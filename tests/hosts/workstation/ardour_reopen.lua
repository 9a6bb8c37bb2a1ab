-- ardour7-lua, second run: reopen the session ardour_record.lua saved,
-- read the tolerance back, play the recorded take through the plugin
-- from the start, save again.
--   ardour7-lua ardour_reopen.lua COMMON.lua SESSION_DIR SESSION_NAME
-- Prints "plumb-check KEY VALUE" lines for tests/hosts/workstation/ardour.sh.
dofile(arg[1])
local session_dir, session_name = arg[2], arg[3]
local TAIL_S = 1.0 -- audio played past the end of the recording

start_dummy_backend()
assert(load_session(session_dir, session_name), "load_session failed")

local track = Session:route_by_name("Harbour")
assert(not track:isnil(), "no track Harbour in the reopened session")
local proc = find_plumb(track)
assert(proc, "no plumb insert on the reopened track")
report("tolerance_after_reopen", get_control(proc, TOLERANCE_PORT))

local end_sample = Session:current_end_sample()
report("session_end_sample", end_sample)
Session:request_locate(0, false, ARDOUR.LocateTransportDisposition.MustStop,
  ARDOUR.TransportRequestSource.TRS_UI)
wait_until(function() return Session:transport_sample() == 0 end, 10)
Session:request_roll(ARDOUR.TransportRequestSource.TRS_UI)
report("rolling", wait_until(function() return Session:transport_rolling() end, 10))
local played = wait_until(function()
  return Session:transport_sample() > end_sample + TAIL_S * SAMPLE_RATE_HZ
end, 60)
report("played_to_end", played)
Session:request_stop(false, false, ARDOUR.TransportRequestSource.TRS_UI)
report("stopped", wait_until(function() return Session:transport_stopped() end, 10))

report("save_state", Session:save_state("", false, false, false, false, false))
close_session()
report("closed", true)
