-- wrk script: POST /v1/builds with an inline (invented) 32-hole front wheel.
-- Usage: KEY=wbk_... LOCATION=<uuid> wrk -t2 -c8 -d10s -s testdata/load/build_create.lua http://127.0.0.1:18080
local key = os.getenv("KEY")
local loc = os.getenv("LOCATION")
wrk.method = "POST"
wrk.path = "/v1/builds"
wrk.headers["Content-Type"] = "application/json"
wrk.headers["Authorization"] = "Bearer " .. key
wrk.body = [[{"location_id":"]] .. loc .. [[","external_ref":"LOAD","spec":{"spoke_count":32,
"hub":{"holes":32,"kind":"bicycle","left":{"pcd_mm":45,"center_to_flange_mm":35,"hole_diameter_mm":2.6,"thickness_mm":3},
"right":{"pcd_mm":45,"center_to_flange_mm":35,"hole_diameter_mm":2.6,"thickness_mm":3}},
"rim":{"holes":32,"erd_mm":601,"bsd_mm":622,"inner_width_mm":19,"hole_diameter_mm":4.2,"spoke_hole_offset_mm":0},
"spoke":{"diameter_mm":2.0,"head_diameter_mm":4.0,"elbow_length_mm":2.8,"thread":{"diameter_mm":2.0,"tpi":56}},
"nipple":{"thread":{"diameter_mm":2.0,"tpi":56},"shank_diameter_mm":3.9,"head_diameter_mm":5.6,"length_mm":12},
"crosses":{"left":3,"right":3},"target_tension_n":1000,"stock":{"increment_mm":2}}}]]
