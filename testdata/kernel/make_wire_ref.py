#!/usr/bin/python3
"""Reference frames signed by jupyter_client's Session (an implementation
outside this project), read by kernel/wire's tests.

Run with Debian's python3: /usr/bin/python3 make_wire_ref.py > wire_ref.json
"""
import hashlib
import hmac
import json

from jupyter_client.session import Session

KEY = b"6b1e5d0c-3f1e-4a5a-9d53-semiflow-ref"

s = Session(key=KEY, session="0b1c2d3e-ref", username="tester")
msg = s.msg("execute_request", content={"code": "1 + 2", "silent": False,
                                       "store_history": True, "user_expressions": {},
                                       "allow_stdin": False, "stop_on_error": True})
frames = s.serialize(msg, ident=[b"client-identity"])
out = {
    "key": KEY.decode(),
    "frames_hex": [f.hex() for f in frames],
    # RFC 4231 test case 2, computed here by Python's hmac module.
    "rfc4231_case2": hmac.new(b"Jefe", b"what do ya want for nothing?", hashlib.sha256).hexdigest(),
}
print(json.dumps(out, indent=1))
