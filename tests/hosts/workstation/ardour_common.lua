-- Shared by the ardour7-lua scripts of tests/hosts/workstation/ardour.sh:
-- the Dummy backend, and small helpers that find things by the names
-- docs/ports.md gives them rather than by Ardour's own numbering.

PLUMB_URI = "urn:plumb:intonation"
TOLERANCE_PORT = 5 -- docs/ports.md, "Control inputs": index 5, `tolerance`
SAMPLE_RATE_HZ = 48000

-- Ardour's Dummy backend, no sound card needed (measured on Debian 12,
-- Ardour 7.3).
-- Device "Sine Wave 1K, 1/3 Oct": capture port c (0-based, of 8) carries
-- a steady sine of 1000 * 2^((c - 4) / 3) Hz at -18 dBFS (amplitude
-- 0.12589), from libs/backends/dummy/dummy_audiobackend.cc,
-- DummyAudioPort::setup_generator. -18 dBFS is a quiet level, and the
-- Dummy backend plays nothing out loud anyway.
-- Driver "10x Speed": one second of wall time is ten seconds of audio.
function start_dummy_backend()
  local backend = AudioEngine:set_backend("None (Dummy)", "", "")
  assert(backend and not backend:isnil(), "no Dummy backend")
  assert(backend:set_device_name("Sine Wave 1K, 1/3 Oct") == 0)
  assert(backend:set_driver("10x Speed") == 0)
  return backend
end

-- Wait while the Dummy backend runs about `audio_s` seconds of audio
-- (its "10x" is a pace, not exact: a little less audio is run).
function sleep_audio(audio_s)
  sleep(audio_s / 10)
end

-- Poll `done` every 50 ms of wall time, at most `wall_s` seconds.
function wait_until(done, wall_s)
  for _ = 1, math.ceil(wall_s / 0.05) do
    if done() then
      return true
    end
    sleep(0.05)
  end
  return done()
end

-- The first plumb insert on `route`, or nil.
function find_plumb(route)
  local i = 0
  while true do
    local proc = route:nth_plugin(i)
    if proc:isnil() then
      return nil
    end
    local insert = proc:to_insert()
    if insert:plugin(0):unique_id() == PLUMB_URI then
      return proc
    end
    i = i + 1
  end
end

-- Ardour's LuaAPI numbers a plugin's control ports 0, 1, 2 ... in port
-- order; this turns an LV2 port index into that number.
function control_number(proc, port_index)
  local plugin = proc:to_insert():plugin(0)
  for n = 0, plugin:parameter_count() - 1 do
    local port, refs = plugin:nth_parameter(n, false)
    if refs[2] and port == port_index then
      return n
    end
  end
  error("no control port " .. port_index)
end

function get_control(proc, port_index)
  local value = ARDOUR.LuaAPI.get_processor_param(proc, control_number(proc, port_index), false)
  return value
end

function set_control(proc, port_index, value)
  assert(ARDOUR.LuaAPI.set_processor_param(proc, control_number(proc, port_index), value))
end

-- One line the shell test reads: "plumb-check KEY VALUE".
function report(key, value)
  print("plumb-check " .. key .. " " .. tostring(value))
end
