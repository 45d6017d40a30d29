-- policy_probe.lua - helper for test_policy_fuzz.sh: tries to open for
-- appending every path listed in the --data file and prints, per path,
-- "refused" (the sandbox raised an error), "opened" or "failed" (allowed by
-- the sandbox, refused by the system, e.g. a missing folder).
local pf = require "psiflight"
local p = pf.parameters{list = {default = "", help = "file with one path per line"}}
for path in io.lines(p.list) do
  local ok, f = pcall(io.open, path, "a")
  local verdict = not ok and "refused" or f and "opened" or "failed"
  if ok and f then f:close() end
  print(verdict .. "\t" .. path)
end
