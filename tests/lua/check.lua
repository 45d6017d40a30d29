-- check.lua - assertion helpers for the Lua test scripts.
--
-- Every physics check names its outside source (a formula, table, standard
-- or reference library) in the `source` argument, so a failing line says
-- what the engine was compared against.  Each passing check prints one
-- "ok ..." line; the first failing one raises an error (non-zero exit).
local check = {}
local count = 0

local function fmt(v) return string.format("%.17g", v) end

-- |got - want| <= rel * |want| (+ abs when given).
function check.near(got, want, rel, label, source, abs)
  assert(type(got) == "number", label .. ": got a " .. type(got) .. ", not a number")
  local tol = rel * math.abs(want) + (abs or 0)
  local err = math.abs(got - want)
  if not (err <= tol) then
    error(string.format("%s: got %s, want %s (|diff| %.3e > tol %.3e) [%s]",
      label, fmt(got), fmt(want), err, tol, source or "no source"), 2)
  end
  count = count + 1
  print(string.format("ok %-52s rel %.2e  [%s]", label, want ~= 0 and err / math.abs(want) or err, source or ""))
end

-- |got - want| <= tol.
function check.close(got, want, tol, label, source)
  local err = math.abs(got - want)
  if not (err <= tol) then
    error(string.format("%s: got %s, want %s (|diff| %.3e > %.3e) [%s]",
      label, fmt(got), fmt(want), err, tol, source or "no source"), 2)
  end
  count = count + 1
  print(string.format("ok %-52s abs %.2e  [%s]", label, err, source or ""))
end

function check.truthy(v, label)
  if not v then error(label .. ": expected true", 2) end
  count = count + 1
  print("ok " .. label)
end

function check.equal(got, want, label)
  if got ~= want then
    error(string.format("%s: got %s, want %s", label, tostring(got), tostring(want)), 2)
  end
  count = count + 1
  print("ok " .. label)
end

-- Calls f and expects it to raise an error whose text contains every
-- plain substring given.
function check.fails(f, label, ...)
  local ok, msg = pcall(f)
  if ok then error(label .. ": expected an error, none was raised", 2) end
  msg = tostring(msg)
  for _, part in ipairs{...} do
    if not msg:find(part, 1, true) then
      error(string.format("%s: error text %q lacks %q", label, msg, part), 2)
    end
  end
  count = count + 1
  print("ok " .. label .. "  (" .. msg:gsub("\n.*", "") .. ")")
end

function check.done()
  print(string.format("ok %d checks", count))
end

return check
