"""Live checks of the nudge kernel through jupyter_client: a progress line that
updates in place and gives way, a notebook with a large sweep saved small and
clean by nbclient and exported by nbconvert without warnings, an interrupt of a
long-running analysis followed by a cell that runs, and a client that
reconnects and still receives iopub.

Run with /usr/bin/python3 -m unittest from this directory, with the nudge
kernelspec on JUPYTER_PATH (make jupyter-test does this).
"""
import json
import os
import subprocess
import sys
import tempfile
import time
import unittest

from jupyter_client.connect import write_connection_file
from jupyter_client.kernelspec import KernelSpecManager
from jupyter_client.manager import KernelManager

# A model of about 3,600 tape nodes; its 2-D sweep of a million points runs for
# several seconds, long enough to interrupt.
LONG_MODEL = "\n".join(
    ["input a = 1 (0.5..2)", "input b = 2 (1..3)", "f0 = a * b"]
    + [f"f{i} = f{i-1} * 0.999 + sqrt(a + {i}) * b / (1 + a)" for i in range(1, 900)]
)
LONG_SWEEP = "sweep f899 over a 0.5..2 and b 1..3 n=1000 limit=1000000"

# Every wait is a hang guard, never a budget: the machine running the tests
# may be busy, and no test asserts how long anything took.
GUARD = 300

# The MIME type of a result's JSON object in a bundle (render.ResultMIME).
RESULT_MIME = "application/vnd.nudge.result+json"


def json_kind(msg):
    return msg["content"]["data"].get(RESULT_MIME, {}).get("kind")


def collect(kc, msg_id, timeout=GUARD):
    """Return the iopub messages of one request up to its idle status."""
    out = []
    deadline = time.time() + timeout
    while time.time() < deadline:
        m = kc.get_iopub_msg(timeout=timeout)
        if m["parent_header"].get("msg_id") != msg_id:
            continue
        out.append(m)
        if m["msg_type"] == "status" and m["content"]["execution_state"] == "idle":
            return out
    raise AssertionError("no idle status for " + msg_id)


def reply_to(kc, msg_id, timeout=GUARD):
    while True:
        r = kc.get_shell_msg(timeout=timeout)
        if r["parent_header"].get("msg_id") == msg_id:
            return r


class LiveKernelTests(unittest.TestCase):
    def setUp(self):
        self.km = KernelManager(kernel_name="nudge")
        self.km.start_kernel()
        self.kc = self.km.client()
        self.kc.start_channels()
        self.kc.wait_for_ready(timeout=GUARD)

    def tearDown(self):
        self.kc.stop_channels()
        self.km.shutdown_kernel(now=False)

    def run_cell(self, code, timeout=GUARD):
        msg_id = self.kc.execute(code)
        reply = reply_to(self.kc, msg_id, timeout)
        return reply, collect(self.kc, msg_id, timeout)

    def test_progress_line_gives_way(self):
        """A long analysis shows one progress line, HTML only (a text front end
        prints nothing of it), updated in place; when it ends the cell is cleared
        with wait and shows its results, so nothing of the line is kept."""
        reply, msgs = self.run_cell(LONG_MODEL + "\n" + LONG_SWEEP)
        self.assertEqual(reply["content"]["status"], "ok")
        kinds = [m["msg_type"] for m in msgs]
        shown = [m for m in msgs if m["msg_type"] == "display_data" and m["content"].get("transient", {}).get("display_id")]
        updates = [m for m in msgs if m["msg_type"] == "update_display_data"]
        self.assertEqual(len(shown), 1, "one progress display: %r" % kinds)
        line = shown[0]["content"]["data"]
        self.assertEqual(list(line), ["text/html"], "the progress line is HTML alone")
        self.assertIn("nudge-progress", line["text/html"])
        self.assertIn("%", line["text/html"])
        pid = shown[0]["content"]["transient"]["display_id"]
        self.assertTrue(all(u["content"]["transient"]["display_id"] == pid for u in updates))
        clear = kinds.index("clear_output")
        self.assertTrue(msgs[clear]["content"]["wait"], "cleared with wait: no flicker")
        self.assertGreater(clear, kinds.index("update_display_data") if updates else kinds.index("display_data"))
        after = [m for m in msgs[clear:] if m["msg_type"] == "display_data"]
        self.assertEqual(json_kind(after[0]), "sweep", "the result follows the clearing")
        self.assertFalse([m for m in msgs[clear:] if m["msg_type"] == "update_display_data"], "no update after the line gave way")

    def test_saved_notebook_is_small_and_clean(self):
        """A 1,000 x 1,000 sweep (it once wrote a 167 MB notebook) run through
        nbclient, as nbconvert --execute does: the progress line shows while it
        runs, and the saved notebook keeps no trace of it and stays under 1 MB.
        nbconvert then exports it to HTML without a warning, highlighting the
        code with the lexer language_info names."""
        import logging
        import nbformat
        import pygments.lexers
        from nbclient import NotebookClient
        from nbconvert import HTMLExporter

        seen = []

        class Recorder(NotebookClient):
            def process_message(self, msg, cell, cell_index):
                seen.append((msg["msg_type"], msg["content"]))
                return super().process_message(msg, cell, cell_index)

        nb = nbformat.v4.new_notebook()
        nb.cells = [nbformat.v4.new_code_cell(LONG_MODEL), nbformat.v4.new_code_cell(LONG_SWEEP)]
        Recorder(nb, kernel_name="nudge", timeout=300).execute()
        self.assertTrue(any(t == "display_data" and "nudge-progress" in c.get("data", {}).get("text/html", "") for t, c in seen),
                        "no progress line was shown while the sweep ran")
        with tempfile.TemporaryDirectory() as d:
            path = os.path.join(d, "big.ipynb")
            nbformat.write(nb, path)
            size = os.path.getsize(path)
            with open(path) as fh:
                saved = fh.read()
        print(f"\nnotebook with a 1,000 x 1,000 sweep: {size / 1024:.0f} KiB saved", file=sys.stderr)
        self.assertLess(size, 1 << 20, "the saved notebook is %d bytes" % size)
        self.assertNotIn("nudge-progress", saved)
        outs = nb.cells[1].outputs
        self.assertEqual([o.output_type for o in outs], ["display_data", "display_data"], "the sweep and the caution, nothing else")
        obj = outs[0].data["application/vnd.nudge.result+json"]
        self.assertEqual(obj["kind"], "sweep")
        self.assertEqual(obj["truncated"][0]["total"], 1000000)
        self.assertNotIn("application/json", outs[0].data)

        li = nb.metadata.language_info
        self.assertTrue(pygments.lexers.get_lexer_by_name(li["pygments_lexer"]))
        records = []

        class Keep(logging.Handler):
            def emit(self, record):
                records.append(record)

        handler = Keep(level=logging.WARNING)
        logging.getLogger().addHandler(handler)
        exporter = HTMLExporter()
        exporter.log.addHandler(handler)
        try:
            body, _ = exporter.from_notebook_node(nb)
        finally:
            logging.getLogger().removeHandler(handler)
            exporter.log.removeHandler(handler)
        self.assertEqual([r.getMessage() for r in records], [], "nbconvert warned")
        self.assertIn("highlight", body)

    def test_interrupt_long_analysis_then_next_cell_runs(self):
        reply, _ = self.run_cell(LONG_MODEL)
        self.assertEqual(reply["content"]["status"], "ok")
        msg_id = self.kc.execute(LONG_SWEEP)
        # Interrupt once the sweep is under way (its progress display is
        # shown), not after a fixed sleep that a busy machine can outlast.
        seen = []
        while True:
            m = self.kc.get_iopub_msg(timeout=GUARD)
            if m["parent_header"].get("msg_id") != msg_id:
                continue
            seen.append(m)
            if m["msg_type"] == "display_data" and m["content"].get("transient", {}).get("display_id"):
                break
        t0 = time.time()
        self.km.interrupt_kernel()  # interrupt_mode "message": an interrupt_request on control
        reply = reply_to(self.kc, msg_id)
        # An Interrupted error is the proof that the sweep stopped before it
        # finished; how long that took is reported, not asserted.
        self.assertEqual(reply["content"]["status"], "error")
        self.assertEqual(reply["content"]["ename"], "Interrupted", reply["content"].get("evalue"))
        print(f"\ninterrupt: the sweep stopped {time.time() - t0:.2f} s after the request", file=sys.stderr)
        rest = collect(self.kc, msg_id)
        self.assertFalse([m for m in seen + rest if m["msg_type"] == "execute_result"], "no result from the interrupted sweep")
        reply, msgs = self.run_cell("f0")
        self.assertEqual(reply["content"]["status"], "ok")
        results = [m for m in msgs if m["msg_type"] == "execute_result"]
        self.assertEqual(results[0]["content"]["data"]["text/plain"], "f0 = 2")

    def test_same_json_as_exec(self):
        """One engine, several fronts: a cell in the kernel and nudge exec --json
        on the same model give the same JSON objects."""
        exe = KernelSpecManager().get_kernel_spec("nudge").argv[0]
        model = os.path.join(os.path.dirname(__file__), "..", "..", "..", "notebooks", "housing.nudge")
        with open(model) as fh:
            src = fh.read()
        src += "\ntornado unit_cost\nbreakeven unit_cost = 105 over shop_rate\n" \
            "scenario lean: cycle_time = 31\ncompare unit_cost across base, lean\n"
        out = subprocess.run([exe, "exec", "--json", "-"], input=src, capture_output=True, text=True, timeout=GUARD)
        self.assertEqual(out.returncode, 0, out.stderr)
        from_exec = [json.loads(line) for line in out.stdout.splitlines()]
        from_exec = [o for o in from_exec if o["kind"] != "print"]
        reply, msgs = self.run_cell(src)
        self.assertEqual(reply["content"]["status"], "ok")
        from_kernel = [m["content"]["data"][RESULT_MIME] for m in msgs
                       if m["msg_type"] in ("display_data", "execute_result")
                       and RESULT_MIME in m["content"]["data"]]
        self.assertEqual([o["kind"] for o in from_kernel], [o["kind"] for o in from_exec])
        self.assertEqual(from_kernel, from_exec)

    def test_completion_and_inspection_by_context(self):
        """Through the protocol, completion offers what the grammar lets stand
        at the cursor (cursor positions in code points), and inspection
        describes a unit in brackets."""
        reply, _ = self.run_cell("input rate = 60 [$/h] (50..70)\ninput hours = 2 [h]\ncost = rate * hours\n"
                                 "scenario lean: hours = 1.5")
        self.assertEqual(reply["content"]["status"], "ok")
        for code, want in [
            ("drivers ", ["cost"]),
            ("sweep cost over ", ["hours", "rate"]),
            ("compare cost across ", ["base", "lean"]),
            ("charts ", ["png", "svg", "text"]),
            ("tornado cost ", ["top="]),
            ("input e = 3 [kW", ["kW", "kWh"]),
            ("x = 2 [€] + 3 [kW", ["kW", "kWh"]),  # a non-ASCII character before the cursor
        ]:
            msg_id = self.kc.complete(code, len(code))
            content = reply_to(self.kc, msg_id)["content"]
            self.assertEqual(content["matches"], want, code)
            self.assertEqual(content["cursor_end"], len(code), code)
        code = "input e = 3 [kWh]"
        msg_id = self.kc.inspect(code, 14)
        content = reply_to(self.kc, msg_id)["content"]
        self.assertTrue(content["found"])
        self.assertIn("kilowatt hour; energy; 1 kWh = 3,600,000 J", content["data"]["text/plain"])

    def test_ten_thousand_executes(self):
        """10,000 executes through the real interpreter: no reply lost, and the
        kernel's resident memory grows by less than 10 MB after a warm-up."""
        pid = self.km.provisioner.process.pid

        def rss_kb():
            with open(f"/proc/{pid}/status") as fh:
                for line in fh:
                    if line.startswith("VmRSS:"):
                        return int(line.split()[1])
            raise AssertionError("no VmRSS")

        def run(n):
            ids = set()
            for i in range(n):
                ids.add(self.kc.execute(f"x{i % 7} = {i} * 2 [kg]\nx{i % 7}", store_history=True))
                if len(ids) >= 50 or i == n - 1:  # keep at most 50 requests in flight
                    while ids:
                        r = self.kc.get_shell_msg(timeout=GUARD)
                        mid = r["parent_header"].get("msg_id")
                        if mid in ids:
                            self.assertEqual(r["content"]["status"], "ok", r["content"])
                            ids.discard(mid)
                    while True:  # drain iopub so the kernel never waits on this client
                        try:
                            self.kc.get_iopub_msg(timeout=0.001)
                        except Exception:
                            break

        run(500)
        before = rss_kb()
        run(10_000)
        grown = (rss_kb() - before) / 1024
        print(f"\n10,000 executes: kernel resident memory {before / 1024:.1f} MB -> grew {grown:.2f} MB", file=sys.stderr)
        self.assertLess(grown, 10, f"resident memory grew by {grown:.1f} MB")

    def test_reconnecting_client_gets_iopub(self):
        self.kc.stop_channels()
        kc2 = self.km.client()
        kc2.start_channels()
        kc2.wait_for_ready(timeout=GUARD)
        msg_id = kc2.execute('print "again"')
        msgs = collect(kc2, msg_id)
        streams = [m["content"]["text"] for m in msgs if m["msg_type"] == "stream"]
        self.assertEqual(streams, ["again\n"])
        kc2.stop_channels()
        self.kc = self.km.client()
        self.kc.start_channels()


class OrphanTests(unittest.TestCase):
    def test_kernel_exits_with_its_parent(self):
        """A kernel whose launcher dies without a shutdown_request exits by itself."""
        exe = KernelSpecManager().get_kernel_spec("nudge").argv[0]
        with tempfile.TemporaryDirectory() as d:
            conn = os.path.join(d, "conn.json")
            write_connection_file(conn, ip="127.0.0.1", key=b"k")
            # A launcher starts the kernel with JPY_PARENT_PID set, as Jupyter
            # does, prints its pid, waits until the kernel listens (so it has
            # seen its parent; no fixed sleep) and exits: the kernel is orphaned.
            launcher = (
                "import json, os, socket, subprocess, sys, time\n"
                "exe, conn, guard = sys.argv[1], sys.argv[2], float(sys.argv[3])\n"
                "env = dict(os.environ, JPY_PARENT_PID=str(os.getpid()))\n"
                "p = subprocess.Popen([exe, 'kernel', '-f', conn], env=env, stderr=subprocess.DEVNULL)\n"
                "print(p.pid, flush=True)\n"
                "port = json.load(open(conn))['hb_port']\n"
                "deadline = time.time() + guard\n"
                "while time.time() < deadline:\n"
                "    try:\n"
                "        socket.create_connection(('127.0.0.1', port), timeout=1).close()\n"
                "        break\n"
                "    except OSError:\n"
                "        time.sleep(0.05)\n"
            )
            out = subprocess.run([sys.executable, "-c", launcher, exe, conn, str(GUARD)],
                                 capture_output=True, text=True, timeout=GUARD).stdout
            pid = int(out.split()[0])
            # The kernel checks for its parent every second; the deadline is
            # a hang guard, and the loop ends as soon as the kernel is gone.
            deadline = time.time() + GUARD
            while time.time() < deadline:
                try:
                    os.kill(pid, 0)
                except ProcessLookupError:
                    break
                time.sleep(0.1)
            else:
                os.kill(pid, 9)
                self.fail(f"the orphaned kernel is still running after {GUARD} s")


if __name__ == "__main__":
    unittest.main()
