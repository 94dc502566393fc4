{
 "command": [
  "rules",
  "{model}",
  "-o",
  "{out}"
 ],
 "kind": "unlocated",
 "signature": "vertexsmith: error: FILE: not a UTF-N text file",
 "seed": 101,
 "index": 27,
 "base": "qed",
 "recipe": [
  "unicode"
 ]
}
