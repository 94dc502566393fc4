{
 "command": ["check", "{model}"],
 "kind": "hang",
 "signature": "over 10 s in limits.py:factor_within_budget (found by the test run, seed 2026, case 121)",
 "seed": 2026,
 "index": 121,
 "base": "dark_sector",
 "recipe": ["number"]
}
