{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "wrong-line",
 "signature": "shown line differs from the file's line",
 "seed": 1,
 "index": 9,
 "base": "qcd",
 "recipe": [
  "unicode"
 ]
}
