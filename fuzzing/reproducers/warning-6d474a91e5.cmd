{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "warning",
 "signature": "RuntimeWarning: overflow encountered in dot",
 "seed": 1,
 "index": 276,
 "base": "su2_yang_mills",
 "recipe": [
  "number",
  "token"
 ]
}
