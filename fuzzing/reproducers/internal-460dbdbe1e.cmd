{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "internal",
 "signature": "vertexsmith: internal error (MemoryError: Unable to allocate N.N TiB for an array with shape (N, N) and data type complexN); this is a bug in vertexsmith, pleas",
 "seed": 101,
 "index": 434,
 "base": "axion_like",
 "recipe": [
  "kind"
 ]
}
