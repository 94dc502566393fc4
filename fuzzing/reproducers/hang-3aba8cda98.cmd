{
 "command": [
  "check",
  "{model}"
 ],
 "kind": "hang",
 "signature": "over 10 s",
 "seed": 101,
 "index": 139,
 "base": "dark_sector",
 "recipe": [
  "name-swap",
  "name-swap"
 ]
}
