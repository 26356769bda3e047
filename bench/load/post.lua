-- wrk script: POST the file $BODY_FILE as JSON with the bearer key $FLUXBOUND_KEY.
wrk.method = "POST"
wrk.headers["Content-Type"] = "application/json"
wrk.headers["Authorization"] = "Bearer " .. os.getenv("FLUXBOUND_KEY")
local f = assert(io.open(os.getenv("BODY_FILE"), "r"))
wrk.body = f:read("*a")
f:close()

-- wrk prints "Non-2xx or 3xx responses: N" when any request failed.
