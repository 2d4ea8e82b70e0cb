-- wrk script: POST the spoke-length contract example (issue 3) with a Bearer
-- key from the environment (KEY; the bare baseline ignores it).
--   KEY=wbk_... wrk -t2 -c32 -d20s -s testdata/load/spoke_lengths.lua http://127.0.0.1:8090/v1/spoke-lengths
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
wrk.headers["Authorization"] = "Bearer " .. (os.getenv("KEY") or "none")
wrk.body = [[{ "spoke_count": 32,
  "hub": { "type": "j_bend",
           "left":  {"pcd_mm": 45, "center_to_flange_mm": 36,   "hole_diameter_mm": 2.6, "thickness_mm": 3.0},
           "right": {"pcd_mm": 45, "center_to_flange_mm": 18.5, "hole_diameter_mm": 2.6} },
  "rim":   { "erd_mm": 599, "spoke_hole_offset_mm": 0 },
  "crosses": { "left": 3, "right": 3 },
  "spoke": { "diameter_mm": 2.0, "material": "stainless_steel" },
  "target_tension_n": 1100,
  "stock": { "increment_mm": 2 } }]]

-- wrk itself prints "Non-2xx or 3xx responses: N" when any answer was not 2xx,
-- so a run of 401s cannot pass for speed.
