"""A scripted jupyter console session against the nudge kernel.

(--simple-prompt reads one line per cell, so lines continued after an
operator are left to the conformance suite's is_complete samples and the Go
tests.)

Feeds a small model line by line to `jupyter console --simple-prompt` and checks
the value, the drivers table and an error with its caret come back; that a
long analysis prints no
progress line; and that `exit` ends the session (the ask_exit payload), so
that the line after it never runs.
"""
import os
import re
import subprocess
import sys

# A model of about 2,700 tape nodes in a few lines; its sweep of 360,000 points
# runs for seconds, long enough for a progress line.
LONG = ["input x = 1 (0.5..2)", "input y = 2 (1..3)", "g0 = x * y"] + [
    f"g{i} = g{i-1} * 0.999 + " + " + ".join(f"sqrt(x + {i * 100 + j}) * y / (1 + x)" for j in range(90))
    for i in range(1, 11)
]

LINES = [
    "input a = 2 [kg]",
    "input p = 3 [$/kg]",
    "c = a * p",
    "c",
    "drivers c",
    "c2 = a * pp",
] + LONG + [
    "sweep g10 over x 0.5..2 and y 1..3 n=600 limit=360000",
    "exit",
    'print "after exit"',
]

# The console's own waits are budgets (1 s for an is_complete reply, after
# which it stops asking the kernel and joins lines into one cell; 60 s to
# start): on a busy machine they become hang guards here.
proc = subprocess.run(
    [sys.executable, "-m", "jupyter_console", "--kernel=nudge", "--simple-prompt",
     "--ZMQTerminalInteractiveShell.kernel_is_complete_timeout=120",
     "--ZMQTerminalInteractiveShell.kernel_timeout=120"],
    input="\n".join(LINES) + "\n",
    capture_output=True,
    text=True,
    timeout=600,
    env=os.environ,
)
out = proc.stdout + proc.stderr
checks = [
    ("Out[4]: c = $6" in out, "the value of c as execute_result"),
    ("elasticity" in out, "the drivers table"),
    ("undefined: pp (did you mean p?)" in out, "an error with a suggestion"),
    ("c2 = a * pp\n         ^" in out, "the caret under the error"),
    ("sweep of g10 over x" in out, "the long sweep's result"),
    (not re.search(r"\d+% \(|nudge-progress", out), "no progress line in a console"),
    ("ending the session" in out, "exit answered"),
    ("after exit" not in out.replace('print "after exit"', ""), "exit ends the session: the next line does not run"),
    (proc.returncode == 0, "the console exits with status 0"),
]
failed = [why for ok, why in checks if not ok]
if failed:
    print(out)
    print("console session: missing " + ", ".join(failed), file=sys.stderr)
    sys.exit(1)
print(f"console session: {len(checks)} passed, 0 failed")
