{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "unlocated",
 "signature": "FILE: error: a number is needed here",
 "seed": 405,
 "index": 241,
 "base": "dark_majorana",
 "recipe": [
  "token"
 ]
}
