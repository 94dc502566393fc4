{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "unlocated",
 "signature": "/tmp/vsfuzz.iNavbmwy/case.vsm: error: the model nests brackets too deeply",
 "seed": 1,
 "index": 80,
 "base": "qcd",
 "recipe": [
  "name-swap",
  "hostile"
 ]
}
