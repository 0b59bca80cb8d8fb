"""A scripted jupyter console session against the nudge kernel.

Feeds a small model line by line to `jupyter console --simple-prompt` and checks
the value, the drivers table and an error with its caret come back.
"""
import os
import subprocess
import sys

LINES = [
    "input a = 2 [kg]",
    "input p = 3 [$/kg]",
    "c = a * p",
    "c",
    "drivers c",
    "c2 = a * pp",
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
    ("Out[4]: c = $6", "the value of c as execute_result"),
    ("elasticity", "the drivers table"),
    ("undefined: pp (did you mean p?)", "an error with a suggestion"),
    ("c2 = a * pp\n         ^", "the caret under the error"),
]
failed = [why for text, why in checks if text not in out]
if failed:
    print(out)
    print(proc.stderr, file=sys.stderr)
    print("console session: missing " + ", ".join(failed), file=sys.stderr)
    sys.exit(1)
print("console session: 4 passed, 0 failed")
