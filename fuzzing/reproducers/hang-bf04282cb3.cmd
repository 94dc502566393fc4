{
 "command": [
  "rules",
  "{model}",
  "-f",
  "json",
  "-o",
  "{out}"
 ],
 "kind": "hang",
 "signature": "over 10 s in limits.py:factor_within_budget",
 "seed": 403,
 "index": 93,
 "base": "qcd",
 "recipe": [
  "line",
  "number"
 ]
}
