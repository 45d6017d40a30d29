-- hostile.lua - a shared recipe gone bad, for the sandbox tests: given an
-- `escape` name it tries one way out of the sandbox.  Every attempt must be
-- refused with the documented exit status (docs/sharing-recipes.md).
local pf = require "psiflight"
local p = pf.parameters{
  escape = {default = "none", help = "which escape to try"},
  target = {default = "", help = "a path outside the allowed folders"},
  out = {default = "", help = "the output folder (as given to --out)"},
}
local here = pf.script.folder
local tries = {
  exec = function() os.execute("touch " .. p.target) end,
  popen = function() io.popen("cat " .. p.target):read("a") end,
  read_outside = function() io.open(p.target):read("a") end,
  write_dotdot = function() io.open(p.out .. "/../escaped.txt", "w"):write("x") end,
  read_symlink = function() io.open(here .. "/link_to_secret"):read("a") end,
  write_symlink_dir = function() io.open(here .. "/link_to_outside_dir/planted.txt", "w"):write("x") end,
  loadlib = function() package.loadlib("libc.so.6", "system") end,
  c_module = function() require "evil" end,
  symlinked_module = function() require "linked_module" end,
  binary_chunk = function() load(string.dump(function() return 1 end))() end,
  dofile_outside = function() dofile(p.target) end,
  loadfile_outside = function() loadfile(p.target) end,
  remove_outside = function() os.remove(p.target) end,
  write_target = function() io.open(p.target, "w"):write("overwritten") end,
  getenv = function() print(os.getenv("HOME")) end,
  sethook = function() debug.sethook() end,
  wisdom = function() pf.setup{wisdom = p.target} end,
  move_output = function() pf.setup{output_dir = p.target} end,
  engine_write_outside = function() pf.write_csv(p.target .. ".csv", {{name = "x", unit = "m", values = {1}}}) end,
  engine_read_outside = function() pf.read_csv(p.target) end,
  engine_h5_outside = function() pf.h5file(p.target .. ".h5") end,
  -- links shipped in the output folder (the folder a script may write)
  dangling_link_write = function() io.open(p.out .. "/dangling.txt", "w"):write("export EVIL=1\n") end,
  dangling_link_engine = function() pf.write_csv("dangling.csv", {{name = "x", unit = "m", values = {1}}}) end,
  link_dir_engine = function() pf.write_csv("linkdir/sub/planted.csv", {{name = "x", unit = "m", values = {1}}}) end,
  link_chain_write = function() io.open(p.out .. "/chain1", "a"):write("x") end,
  link_as_written = function() io.open("link_to_secret"):read("a") end,
  io_output_dangling = function() io.output(p.out .. "/dangling.txt") io.write("x") end,
  io_input_link = function() io.input(here .. "/link_to_secret") print(io.read("a")) end,
  -- the script's own folder is read-only
  rewrite_own_recipe = function() io.open(here .. "/hostile.lua", "w"):write("-- replaced\n") end,
  remove_own_file = function() os.remove(here .. "/hostile.lua") end,
  -- a link that another program keeps swapping: a write either lands in the
  -- output folder or is refused, never outside
  swapped_link = function()
    local wrote, refused = 0, 0
    for _ = 1, 20000 do
      local ok, f = pcall(io.open, p.out .. "/swap.txt", "a")
      if ok and f then f:write("x") f:close() wrote = wrote + 1 else refused = refused + 1 end
    end
    print(string.format("swap: wrote %d, refused %d", wrote, refused))
  end,
  read_inner_link = function() print("inner: " .. io.open(p.out .. "/inner_link"):read("l")) end,
  allocate = function() local t = {} while true do t[#t + 1] = string.rep("x", 1 << 20) .. #t end end,
  engine_allocate = function()
    local g = pf.grid{points = {256, 256, 256}, span = 1e-4}
    pf.wave(g, {mass = 1e-26, position = function() return 1 end})
  end,
  loop = function() local n = 0 while true do n = n + 1 end end,
  loop_in_coroutine = function() coroutine.wrap(function() while true do end end)() end,
  loop_catching = function() while true do pcall(function() while true do end end) end end,
  loop_catching_in_coroutine = function()
    local co = coroutine.create(function() while true do pcall(function() while true do end end) end end)
    while true do coroutine.resume(co) end
  end,
  handler_loop = function()
    while true do xpcall(function() while true do end end, function(e) while true do end end) end
  end,
  partial_then_loop = function() local f = pf.h5file("held.h5"); f:put_value("n", 1, ""); while true do end end,
  -- allowed operations, for contrast
  write_output = function()
    local f = assert(io.open(p.out .. "/result.txt", "w")); f:write("fine\n"); f:close(); print("wrote output")
  end,
  read_own_folder = function() print((io.open(here .. "/hostile.lua"):read("l"))) end,
  read_data = function() print("data: " .. io.open(p.target):read("l")) end,
}
local try = tries[p.escape]
if not try then error("unknown escape " .. p.escape) end
try()
