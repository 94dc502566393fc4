{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "internal",
 "signature": "vertexsmith: internal error (ValueError: array is too big; `arr.size * arr.dtype.itemsize` is larger than the maximum possible size.); this is a bug in vertexsm",
 "seed": 101,
 "index": 2280,
 "base": "qed",
 "recipe": [
  "kind"
 ]
}
