-- gen-annotations.lua SIGNATURES OUT - writes the type annotations of the
-- whole Lua API in the format Lua language servers read (LuaLS `---@meta`
-- file), so editors complete pf.* functions, object methods and option keys.
--
-- Run with lua5.4 and the built module on LUA_CPATH (`make annotations`).
-- What exists is not typed here: it is read from the loaded module itself —
-- the functions the binding registered on the module table, the method
-- tables of every object type the binding registered in the Lua registry
-- (psiflight.wave, psiflight.grid, ...), and the option keys each function
-- declared to the options checker (pf._option_sets()).  Only what cannot be
-- read from the module — parameter names and types, return types and a line
-- of help — comes from SIGNATURES (scripts/lua-api-signatures.lua).  A
-- function without a signature, or a signature without a function, stops
-- the generator with a message saying what to add or remove where; so the
-- annotations cannot drift from the binding (tests/runner/test_annotations.sh).
local pf = require "psiflight"

-- Arguments: SIGNATURES OUT [--lenient] from lua5.4's command line, or, run
-- by the psiflight runner (--trusted, which the Makefile uses so that the
-- module needs no LUA_CPATH and sanitizer builds work too), from the
-- environment: PSIFLIGHT_SIGNATURES, PSIFLIGHT_ANNOTATIONS, PSIFLIGHT_LENIENT=1.
-- --lenient (make install) writes what it can and only warns about drift.
local args = arg or {os.getenv("PSIFLIGHT_SIGNATURES"), os.getenv("PSIFLIGHT_ANNOTATIONS"),
                     os.getenv("PSIFLIGHT_LENIENT") == "1" and "--lenient" or nil}
local sig_path, out_path, lenient = args[1], args[2], args[3] == "--lenient"
assert(sig_path and out_path, "usage: lua5.4 gen-annotations.lua SIGNATURES OUT [--lenient]")
local spec = dofile(sig_path)
local signatures, classes = spec.functions, spec.classes

-- Methods present on both wave functions and ensembles are documented once,
-- as state methods (the binding's pfl_add_state_methods registers them on both).
local SHARED = {wave = true, ensemble = true}

-- 1. The live API -------------------------------------------------------------
local live = {}   -- key ("pf.grid", "wave:fly", "state:flux") -> true
local owner = {}  -- class name -> sorted method keys
local function add(key) live[key] = true end

local function sorted_keys(t)
  local keys = {}
  for k in pairs(t) do if type(k) == "string" then keys[#keys + 1] = k end end
  table.sort(keys)
  return keys
end

-- Internal helpers of the test suite start with '_' and are not annotated.
local function public(name) return name:sub(1, 1) ~= "_" end

local values = {}  -- module fields that are not functions: name -> type name
for _, name in ipairs(sorted_keys(pf)) do
  local v = pf[name]
  if type(v) == "function" then
    if public(name) then add("pf." .. name) end
  elseif type(v) == "table" then
    for _, sub in ipairs(sorted_keys(v)) do
      if type(v[sub]) == "function" then add("pf." .. name .. "." .. sub) end
    end
    values[name] = "table"
  else
    values[name] = type(v)
  end
end

local registry = debug.getregistry()
local methods_of = {}
for _, regname in ipairs(sorted_keys(registry)) do
  local class = regname:match("^psiflight%.([%w_]+)$")
  local mt = registry[regname]
  if class and type(mt) == "table" then
    local m = type(mt.__index) == "table" and mt.__index or mt.methods or {}
    methods_of[class] = m
  end
end
for class, m in pairs(methods_of) do
  local keys = {}
  for _, name in ipairs(sorted_keys(m)) do
    if type(m[name]) == "function" and public(name) then
      local other = class == "wave" and "ensemble" or "wave"
      local shared = SHARED[class] and methods_of[other] and methods_of[other][name] ~= nil
      local key = (shared and "state:" or class .. ":") .. name
      add(key)
      keys[#keys + 1] = key
    end
  end
  owner[class] = keys
end

-- 2. Drift: every function has a signature and every signature a function ------
local problems = {}
for _, key in ipairs(sorted_keys(live)) do
  if not signatures[key] then
    problems[#problems + 1] = string.format(
      "%s is registered by the binding but has no signature: add\n"
        .. "    [\"%s\"] = {\"PARAMS\", \"RETURNS\", \"one line of help\"},\n"
        .. "  to the functions table of scripts/lua-api-signatures.lua (format: docs/editors.md)", key, key)
  end
end
for _, key in ipairs(sorted_keys(signatures)) do
  if not live[key] then
    problems[#problems + 1] = string.format(
      "%s has a signature in scripts/lua-api-signatures.lua but the binding registers no such function: "
        .. "remove or rename it", key)
  end
end
for class in pairs(methods_of) do
  if not classes[class] then
    problems[#problems + 1] = string.format(
      "the binding registers the object type psiflight.%s: add classes.%s = {doc = \"...\"} to "
        .. "scripts/lua-api-signatures.lua", class, class)
  end
end

-- 3. Signatures -> annotation lines ------------------------------------------
local option_sets = pf._option_sets()
local function option_class(key)
  return "psiflight.options." .. key:gsub("[^%w]+", "_")
end

-- "t: number, opts?: options" -> list of {name, type, optional}.  The type
-- `options` stands for the options table the function declared (its keys
-- come from the options checker).
local function parse_params(key, text)
  local params = {}
  if text == "" then return params end
  -- Split at commas outside parentheses and braces (a type may be
  -- fun(a: T, b: U) or table<K, V>).
  local items, depth, start = {}, 0, 1
  for i = 1, #text do
    local ch = text:sub(i, i)
    if ch == "(" or ch == "{" or ch == "<" then depth = depth + 1
    elseif ch == ")" or ch == "}" or ch == ">" then depth = depth - 1
    elseif ch == "," and depth == 0 then items[#items + 1] = text:sub(start, i - 1); start = i + 1 end
  end
  items[#items + 1] = text:sub(start)
  for _, raw in ipairs(items) do
    local item = raw:match("^%s*(.-)%s*$")
    local name, opt, ty = item:match("^([%w_%.]+)(%??)%s*:%s*(.+)$")
    if not name then
      problems[#problems + 1] = string.format("%s: cannot read parameter '%s' (write NAME: TYPE or NAME?: TYPE)", key, item)
      return params
    end
    if ty == "options" then
      if option_sets[key] then
        ty = option_class(key)
      else
        problems[#problems + 1] = string.format(
          "%s: parameter %s has type 'options' but the function declares no options set", key, name)
        ty = "table"
      end
    end
    params[#params + 1] = {name = name, type = ty, optional = opt == "?"}
  end
  return params
end

local out = {}
local function emit(line) out[#out + 1] = line end

local function emit_function(key, lua_name)
  local s = signatures[key]
  if not s then return end
  local params = parse_params(key, s[1])
  for line in (s[3] .. "\n"):gmatch("(.-)\n") do emit("---" .. line) end
  local names = {}
  for _, p in ipairs(params) do
    if p.name == "..." then
      emit("---@param ... " .. p.type)
    else
      emit(string.format("---@param %s%s %s", p.name, p.optional and "?" or "", p.type))
    end
    names[#names + 1] = p.name
  end
  if s[2] ~= "" then emit("---@return " .. s[2]) end
  emit(string.format("function %s(%s) end", lua_name, table.concat(names, ", ")))
  emit("")
end

emit("---@meta psiflight")
emit("-- Type annotations of psiflight's Lua API for Lua language servers.")
emit("-- Generated by scripts/gen-annotations.lua from the built module and")
emit("-- scripts/lua-api-signatures.lua (`make annotations`); do not edit.")
emit("")

-- Option tables: one class per declared set, fields from the checker.
for _, set in ipairs(sorted_keys(option_sets)) do
  emit(string.format("---Keys accepted by %s (the options checker refuses others).", set))
  emit("---@class " .. option_class(set))
  local keys = {}
  for _, k in ipairs(option_sets[set]) do keys[#keys + 1] = k end
  table.sort(keys)
  for _, k in ipairs(keys) do emit(string.format("---@field %s? any", k)) end
  emit("")
end

-- Object types and their methods.
local class_order = sorted_keys(classes)
for _, class in ipairs(class_order) do
  local c = classes[class]
  for line in (c.doc .. "\n"):gmatch("(.-)\n") do emit("---" .. line) end
  emit(string.format("---@class psiflight.%s%s", class, c.parent and (" : psiflight." .. c.parent) or ""))
  for _, line in ipairs(c.extra or {}) do emit(line) end
  local var = "psiflight_" .. class
  emit(string.format("local %s = {}", var))
  emit("")
  if class == "state" then
    for _, key in ipairs(sorted_keys(live)) do
      local name = key:match("^state:(.+)$")
      if name then emit_function(key, var .. ":" .. name) end
    end
  else
    for _, key in ipairs(owner[class] or {}) do
      local name = key:match("^" .. class .. ":(.+)$")
      if name then emit_function(key, var .. ":" .. name) end
    end
  end
end

-- The module table.
emit("---The psiflight module: `local pf = require \"psiflight\"`.")
emit("---@class psiflight.module")
for _, name in ipairs(sorted_keys(values)) do
  local doc = (spec.fields or {})[name]
  if not doc then
    problems[#problems + 1] = string.format(
      "the module field pf.%s (%s) has no entry in the fields table of scripts/lua-api-signatures.lua", name, values[name])
  else
    emit(string.format("---@field %s %s %s", name, doc[1], doc[2]))
  end
end
emit("local pf = {}")
emit("")
-- Tables inside the module (pf.constants, pf.units, and under the runner
-- pf.script, pf.params): their number and string fields
-- are read from the module, their functions need signatures.
for _, name in ipairs(sorted_keys(values)) do
  if values[name] == "table" then
    local t, var = pf[name], "psiflight_" .. name
    emit(string.format("---@class psiflight.%s", name))
    for _, k in ipairs(sorted_keys(t)) do
      local ty = type(t[k])
      if ty == "number" or ty == "string" then emit(string.format("---@field %s %s", k, ty)) end
    end
    emit(string.format("local %s = {}", var))
    emit("")
    for _, k in ipairs(sorted_keys(t)) do
      if type(t[k]) == "function" then emit_function("pf." .. name .. "." .. k, var .. "." .. k) end
    end
  end
end
for _, key in ipairs(sorted_keys(live)) do
  local name = key:match("^pf%.([%w_]+)$")
  if name then emit_function(key, "pf." .. name) end
end
emit("return pf")

if #problems > 0 then
  io.stderr:write("gen-annotations: the Lua API and its signatures disagree:\n")
  for _, p in ipairs(problems) do io.stderr:write("  - ", p, "\n") end
  if not lenient then os.exit(1) end
  io.stderr:write("gen-annotations: writing the annotations without those functions (--lenient)\n")
end

local tmp = out_path .. ".tmp"
local f = assert(io.open(tmp, "w"))
f:write(table.concat(out, "\n"), "\n")
f:close()
assert(os.rename(tmp, out_path))
local n = 0
for _ in pairs(live) do n = n + 1 end
print(string.format("gen-annotations: %d functions and methods, %d option sets -> %s", n, #sorted_keys(option_sets), out_path))
