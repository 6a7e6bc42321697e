#!/usr/bin/env python3
"""Regenerate the generated parts of README.md and docs/*.md between their markers:

  <!-- generated: density-table -->   cargo run --example density_table
  <!-- generated: accuracy-table -->  cargo run --example accuracy_table
  <!-- generated: hazard-review -->   cargo run --example hazard_review
  <!-- generated: fill-sheet -->      cargo run -- plan flue-gas-span
  <!-- generated: check-lpg -->       cargo run -- check lpg-in-methane
  <!-- generated: certificate -->     cargo run -- certify tests/records/flue-gas-made.ron --issued 2026-12-04
  <!-- generated: plan-liquid -->     cargo run -- plan --mix "CO2=60%,N2=balance" --volume 10L --pressure 150bar
  <!-- generated: state-two-phase --> cargo run -- state --mix CO2 --temp 15C --volume 10L --amount 100mol
  <!-- generated: verify -->          cargo run -- verify tests/verifications/co-ppm-quadratic.ron

Run from anywhere: python3 tools/update_readme.py
"""
import glob
import os
import re
import subprocess

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))

PARTS = {
    "density-table": (["cargo", "run", "-q", "--example", "density_table"], None),
    "accuracy-table": (["cargo", "run", "-q", "--example", "accuracy_table"], None),
    "hazard-review": (["cargo", "run", "-q", "--example", "hazard_review"], None),
    "fill-sheet": (["cargo", "run", "-q", "--", "plan", "flue-gas-span"], "plan flue-gas-span"),
    "check-lpg": (["cargo", "run", "-q", "--", "check", "lpg-in-methane"], "check lpg-in-methane"),
    "certificate": (["cargo", "run", "-q", "--", "certify", "tests/records/flue-gas-made.ron", "--issued", "2026-12-04"],
                    "certify tests/records/flue-gas-made.ron --issued 2026-12-04"),
    "plan-liquid": (["cargo", "run", "-q", "--", "plan", "--mix", "CO2=60%,N2=balance", "--volume", "10L",
                     "--pressure", "150bar"],
                    'plan --mix "CO2=60%,N2=balance" --volume 10L --pressure 150bar'),
    "state-two-phase": (["cargo", "run", "-q", "--", "state", "--mix", "CO2", "--temp", "15C", "--volume", "10L",
                         "--amount", "100mol"],
                        "state --mix CO2 --temp 15C --volume 10L --amount 100mol"),
    "verify": (["cargo", "run", "-q", "--", "verify", "tests/verifications/co-ppm-quadratic.ron"],
               "verify tests/verifications/co-ppm-quadratic.ron"),
}


def main():
    paths = [os.path.join(ROOT, "README.md")] + sorted(glob.glob(os.path.join(ROOT, "docs", "*.md")))
    texts = {p: open(p, encoding="utf-8").read() for p in paths}
    env = dict(os.environ, FILLWRIGHT_CONFIG=os.path.join(ROOT, "target", "readme-config"))
    for name, (cmd, fenced) in PARTS.items():
        done = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, env=env)
        # 3 is a stop or an inconsistency: the output is still the example to show.
        if done.returncode not in (0, 3):
            raise SystemExit(f"{' '.join(cmd)} exited {done.returncode}: {done.stderr}")
        out = done.stdout
        body = f"```\n$ fillwright {fenced}\n{out}```\n" if fenced else out
        pattern = re.compile(rf"(<!-- generated: {name} -->\n).*?(<!-- /generated -->)", re.S)
        found = 0
        for path, text in texts.items():
            texts[path], n = pattern.subn(lambda m: m.group(1) + body + m.group(2), text)
            found += n
        if found != 1:
            raise SystemExit(f"the README and docs/ have {found} markers for {name}, not one")
    for path, text in texts.items():
        open(path, "w", encoding="utf-8").write(text)


if __name__ == "__main__":
    main()
