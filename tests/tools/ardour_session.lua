-- SPDX-License-Identifier: GPL-3.0-or-later
-- Builds and reads back the Ardour sessions of tests/outside/ardour.sh.
-- Run by ardour7-lua (Ardour 7's headless Lua interpreter) with the
-- arguments after "--":
--
--   make DIR NAME RATE CHANNELS URI PRESET INDEX=VALUE...
--       a new session at RATE Hz: one audio track of CHANNELS inputs and
--       two outputs (the master bus is stereo), its panner bypassed so a
--       mono track reaches both master inputs at unity; the plugin URI on
--       it (or none for "-"), then the preset (a URI, "label:" and a label, or "-" for none),
--       then each control input port INDEX (lv2:index) set to VALUE through
--       the plugin's automation control; region and transport fades off.
--       Saves, and prints "latency N" (what Ardour says the track's signal
--       latency is) and "value INDEX VALUE" for each INDEX given (a bare
--       INDEX is printed, not set).
--   read DIR NAME INDEX...
--       loads the saved session in a fresh process and prints
--       "latency N" and "value INDEX VALUE" for the plugin on track "T".
--
-- Ardour 7.3's Lua exposes no port symbols, so the caller maps symbols to
-- indices (from `vernier describe --json`). Any failure prints
-- "error: ..." and exits non-zero; the caller runs this under `timeout`
-- with stdin closed, as a session that fails to load can leave Ardour
-- waiting.

local TRACK = "T"

local function fail(why)
  print("error: " .. why)
  io.stdout:flush()
  os.exit(1)
end

local function control(insert, index)
  local c = insert:to_automatable():automation_control(
    Evoral.Parameter(ARDOUR.AutomationType.PluginAutomation, 0, index), false)
  if c:isnil() then
    fail("the plugin has no control input at index " .. index)
  end
  return c
end

-- Ardour works out a route's latency in the process thread: let a few
-- cycles run before asking.
local function print_state(track, insert, indices)
  ARDOUR.LuaAPI.wait_for_process_callback(8, 5000)
  print("latency " .. track:signal_latency())
  for _, index in ipairs(indices) do
    print(string.format("value %d %.9g", index, control(insert, index):get_value()))
  end
end

local function load_preset(plugin, preset)
  local record
  if preset:sub(1, 6) == "label:" then
    record = plugin:preset_by_label(preset:sub(7))
  else
    record = plugin:preset_by_uri(preset)
  end
  if not record or record.uri == "" then
    fail("Ardour does not list the preset " .. preset)
  end
  if not plugin:load_preset(record) then
    fail("Ardour could not load the preset " .. preset)
  end
end

local function make(a)
  local dir, name, rate, channels, uri, preset = a[2], a[3], tonumber(a[4]), tonumber(a[5]), a[6], a[7]
  if not create_session(dir, name, rate) then
    fail("could not create the session " .. dir)
  end
  Session:cfg():set_use_region_fades(false)
  Session:cfg():set_use_transport_fades(false)
  local tracks = Session:new_audio_track(channels, 2, nil, 1, TRACK,
    ARDOUR.PresentationInfo.max_order, ARDOUR.TrackMode.Normal, true)
  if tracks:size() ~= 1 then
    fail("could not add a track")
  end
  local track = tracks:front()
  track:panner_shell():set_bypassed(true)
  if uri == "-" then -- no plugin: the track as it is
    print_state(track, nil, {})
    Session:save_state("", false, false, false, false, false)
    close_session()
    return
  end
  local proc = ARDOUR.LuaAPI.new_plugin(Session, uri, ARDOUR.PluginType.LV2, "")
  if proc:isnil() then
    fail("Ardour cannot instantiate " .. uri)
  end
  if track:add_processor_by_index(proc, 0, nil, true) ~= 0 then
    fail("could not insert " .. uri .. " on the track")
  end
  local insert = proc:to_plugininsert()
  if preset ~= "-" then
    load_preset(insert:plugin(0), preset)
  end
  local indices = {}
  for i = 8, #a do
    local index, value = a[i]:match("^(%d+)=(.+)$")
    if index then
      control(insert, tonumber(index)):set_value(tonumber(value), PBD.GroupControlDisposition.NoGroup)
    else
      index = a[i]:match("^(%d+)$")
      if not index then
        fail("not INDEX or INDEX=VALUE: " .. a[i])
      end
    end
    indices[#indices + 1] = tonumber(index)
  end
  print_state(track, insert, indices)
  Session:save_state("", false, false, false, false, false)
  close_session()
end

local function read(a)
  if not load_session(a[2], a[3]) then
    fail("could not load the session " .. a[2])
  end
  local track = Session:route_by_name(TRACK):to_track()
  if track:isnil() then
    fail("no track " .. TRACK)
  end
  local proc = track:nth_plugin(0)
  if proc:isnil() then
    fail("no plugin on track " .. TRACK)
  end
  local indices = {}
  for i = 4, #a do
    indices[#indices + 1] = tonumber(a[i])
  end
  print_state(track, proc:to_plugininsert(), indices)
  close_session()
end

AudioEngine:set_backend("None (Dummy)", "", "")
if arg[1] == "make" then
  make(arg)
elseif arg[1] == "read" then
  read(arg)
else
  fail("usage: make DIR NAME RATE CHANNELS URI PRESET INDEX=VALUE... | read DIR NAME INDEX...")
end
