"""The kernel and the what-if panel in a real browser.

Debian's classic Notebook (jupyter-notebook) serves a copy of a demo notebook
on 127.0.0.1 with a token; headless Debian Chromium, driven by Debian's
python3-selenium through chromium-driver, opens it, runs every cell with the
nudge kernel, and checks that the tornado chart (an SVG image) is in the page,
that completion returns names of the model, and that the what-if panel's
sliders recompute the output in the notebook. Then it opens from disk the HTML
that nbconvert writes of the notebook executed with the kernel, and the report
that `nudge run` writes, moves the panel's sliders to chosen values in each and
compares the value shown with `nudge exec --json` at the same inputs (relative
1e-12). Last, a notebook saved by `nudge run` opened in the Notebook is not
trusted: its panels show their tables and the note on trust, and once File >
Trust Notebook is confirmed, their sliders.

Every wait polls a condition in the page under a generous guard; nothing
assumes how long a step takes. Screenshots are kept under out/browser/.

Run by `make browser-test` (part of `make test`), with JUPYTER_PATH naming
the kernelspec that make installs and NUDGE the binary.
"""

import base64
import json
import os
import secrets
import shutil
import socket
import subprocess
import sys
import tempfile
import time
import unittest
import urllib.request

HINT = ("the browser test needs Debian's chromium, chromium-driver, python3-selenium and jupyter-notebook:"
        " make deps (as root) installs them")
try:
    from selenium import webdriver
    from selenium.webdriver.chrome.options import Options
    from selenium.webdriver.chrome.service import Service
    from selenium.webdriver.common.action_chains import ActionChains
    from selenium.webdriver.common.by import By
    from selenium.webdriver.common.keys import Keys
except ImportError as e:
    sys.exit("%s (%s)" % (HINT, e))

PY = sys.executable
REPO = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", "..", ".."))
OUT = os.path.join(REPO, "out", "browser")
NUDGE = os.environ.get("NUDGE", os.path.join(REPO, "out", "nudge"))
NOTEBOOK = "housing.ipynb"
OUTPUT = "unit_cost"

# Hang guards: a step that takes longer than this has stopped, however
# loaded the machine is.
GUARD = float(os.environ.get("NUDGE_BROWSER_GUARD", "600"))
POLL = 0.25


def chromium_binary():
    # The Debian wrapper /usr/bin/chromium only adds flags; start the
    # browser itself.
    for b in ("/usr/lib/chromium/chromium", "/usr/bin/chromium"):
        if os.path.exists(b):
            return b
    raise AssertionError("chromium is not installed: " + HINT)


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def wait_for(what, cond, guard=GUARD):
    """Polls cond until it returns a true value, which it returns; fails
    naming what after guard seconds."""
    end = time.monotonic() + guard
    last = None
    while time.monotonic() < end:
        try:
            v = cond()
            if v:
                return v
        except Exception as e:  # the page may be reloading
            last = e
        time.sleep(POLL)
    raise AssertionError("gave up waiting for %s%s" % (what, " (last error: %s)" % last if last else ""))


def model_text():
    """The model cell of the demo notebook."""
    with open(os.path.join(REPO, "notebooks", NOTEBOOK)) as f:
        nb = json.load(f)
    for c in nb["cells"]:
        if c["cell_type"] == "code":
            return "".join(c["source"])
    raise AssertionError("no code cell in " + NOTEBOOK)


def exec_value(model, values):
    """The output at the given input values, by nudge exec --json: a
    scenario that sets them, compared with the base."""
    assigns = ", ".join("%s = %s" % (k, repr(float(v))) for k, v in values.items())
    src = model + "\nscenario probe: %s\ncompare %s across base, probe\n" % (assigns, OUTPUT)
    with tempfile.NamedTemporaryFile("w", suffix=".nudge", delete=False) as f:
        f.write(src)
        path = f.name
    try:
        r = subprocess.run([NUDGE, "exec", "--json", path], capture_output=True, text=True, timeout=GUARD)
    finally:
        os.unlink(path)
    if r.returncode != 0:
        raise AssertionError("nudge exec failed: %s%s" % (r.stdout, r.stderr))
    for line in r.stdout.splitlines():
        o = json.loads(line)
        if o.get("kind") == "compare":
            for s in o["scenarios"]:
                if s["name"] == "probe":
                    return s["value"]
    raise AssertionError("no compare result in: " + r.stdout)


def exec_bars(model, top):
    """The output at each end of the ranges of the top inputs, by nudge exec
    --json of explore: {name: (output_at_low, output_at_high)}."""
    with tempfile.NamedTemporaryFile("w", suffix=".nudge", delete=False) as f:
        f.write(model + "\nexplore %s top=%d\n" % (OUTPUT, top))
        path = f.name
    try:
        r = subprocess.run([NUDGE, "exec", "--json", path], capture_output=True, text=True, timeout=GUARD)
    finally:
        os.unlink(path)
    if r.returncode != 0:
        raise AssertionError("nudge exec failed: %s%s" % (r.stdout, r.stderr))
    for line in r.stdout.splitlines():
        o = json.loads(line)
        if o.get("kind") == "explore":
            return {i["name"]: (i["output_at_low"], i["output_at_high"]) for i in o["inputs"]}
    raise AssertionError("no explore result in: " + r.stdout)


# Reads the panel: its sliders (name, min, max, value) and the value shown.
READ_PANEL = """
const p = arguments[0];
const v = p.querySelector('.nudge-explore-value');
return {
  sliders: Array.from(p.querySelectorAll('input.nudge-explore-slider')).map(s =>
    ({name: s.dataset.input, min: s.min, max: s.max, value: s.value})),
  shown: v ? v.getAttribute('data-value') : null,
  text: v ? v.textContent : null,
  error: (p.querySelector('.nudge-explore-error') || {}).textContent || ''
};
"""

# Moves the sliders named in arguments[1] to the values given, as a person's
# drag does: the value changes and an input event fires.
MOVE = """
const p = arguments[0], to = arguments[1];
for (const s of p.querySelectorAll('input.nudge-explore-slider')) {
  if (s.dataset.input in to) {
    s.value = String(to[s.dataset.input]);
    s.dispatchEvent(new Event('input', {bubbles: true}));
  }
}
"""


class BrowserTest(unittest.TestCase):
    @classmethod
    def setUpClass(cls):
        if not os.path.exists(NUDGE):
            raise AssertionError("no nudge binary at %s: run make build" % NUDGE)
        os.makedirs(OUT, exist_ok=True)
        cls.tmp = tempfile.mkdtemp(prefix="nudge-browser-")
        cls.nbdir = os.path.join(cls.tmp, "notebooks")
        shutil.copytree(os.path.join(REPO, "notebooks"), cls.nbdir)
        cls.model = model_text()

        # The classic Notebook, its state kept in the temporary directory.
        env = dict(os.environ)
        for k, d in (("JUPYTER_CONFIG_DIR", "config"), ("JUPYTER_DATA_DIR", "data"), ("JUPYTER_RUNTIME_DIR", "runtime"),
                     ("IPYTHONDIR", "ipython")):
            env[k] = os.path.join(cls.tmp, d)
        cls.env = env
        cls.port = free_port()
        cls.token = secrets.token_hex(16)
        cls.server_log = open(os.path.join(OUT, "notebook-server.log"), "w")
        cls.server = subprocess.Popen(
            [PY, "-m", "notebook", "--no-browser", "--ip=127.0.0.1", "--port=%d" % cls.port,
             "--port-retries=0", "--NotebookApp.token=" + cls.token, "--notebook-dir=" + cls.nbdir, "--allow-root"],
            env=env, stdout=cls.server_log, stderr=subprocess.STDOUT)
        cls.base = "http://127.0.0.1:%d" % cls.port

        def up():
            if cls.server.poll() is not None:
                raise AssertionError("the notebook server exited (see out/browser/notebook-server.log); " + HINT)
            try:
                with urllib.request.urlopen("%s/api/status?token=%s" % (cls.base, cls.token), timeout=10) as r:
                    return r.status == 200
            except OSError:
                return False

        try:
            wait_for("the notebook server", up)
        except AssertionError:
            cls.tearDownClass()
            raise

        opts = Options()
        opts.binary_location = chromium_binary()
        # Do not wait for scripts a page names on the network (nbconvert's
        # template names a CDN, which a machine offline never answers).
        opts.page_load_strategy = "eager"
        for a in ("--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                  "--disable-component-update", "--disable-sync", "--no-first-run",
                  "--disable-dev-shm-usage", "--window-size=1280,2400",
                  "--user-data-dir=" + os.path.join(cls.tmp, "chromium")):
            opts.add_argument(a)
        service = Service("/usr/bin/chromedriver") if os.path.exists("/usr/bin/chromedriver") else Service()
        cls.driver = webdriver.Chrome(service=service, options=opts)
        cls.driver.set_script_timeout(GUARD)
        cls.driver.set_page_load_timeout(GUARD)

    @classmethod
    def tearDownClass(cls):
        d = getattr(cls, "driver", None)
        if d is not None:
            d.quit()
        s = getattr(cls, "server", None)
        if s is not None and s.poll() is None:
            s.terminate()
            try:
                s.wait(timeout=60)
            except subprocess.TimeoutExpired:
                s.kill()
                s.wait()
        log = getattr(cls, "server_log", None)
        if log:
            log.close()
        shutil.rmtree(cls.tmp, ignore_errors=True)

    def js(self, script, *args):
        return self.driver.execute_script(script, *args)

    def check_panel(self, panel, where):
        """Moves the panel's sliders to chosen values, and once by a click on
        a slider, and compares the value shown with nudge exec --json."""
        d = self.driver
        info = self.js(READ_PANEL, panel)
        sliders = info["sliders"]
        self.assertGreaterEqual(len(sliders), 2, where + ": sliders")
        self.assertEqual(info["error"], "", where)
        base = {s["name"]: float(s["value"]) for s in sliders}
        want = exec_value(self.model, base)
        self.assertLessEqual(abs(float(info["shown"]) - want), 1e-12 * abs(want), where + ": at the baseline")
        # At the baseline the bars are the tornado's: each input's ends, the
        # others at their baselines, as nudge exec --json computes them.
        bars = self.js("return Array.from(arguments[0].querySelectorAll('.nudge-explore-bar')).map(b =>"
                       " [b.dataset.input, b.dataset.low, b.dataset.high])", panel)
        self.assertEqual(len(bars), len(sliders), where + ": bars")
        go = exec_bars(self.model, len(sliders))
        for name, lo, hi in bars:
            for got, want in ((float(lo), go[name][0]), (float(hi), go[name][1])):
                self.assertLessEqual(abs(got - want), 1e-12 * abs(want), "%s: the bar of %s: %r, nudge exec %r" % (where, name, got, want))

        # Chosen values: fractions of each range, a different one for each
        # slider, and both ends.
        sets = []
        for frac in ((0.3, 0.85, 0.1, 0.6), (0.0, 1.0, 1.0, 0.0), (0.77, 0.05, 0.5, 0.93)):
            to = {}
            for i, s in enumerate(sliders):
                lo, hi = float(s["min"]), float(s["max"])
                to[s["name"]] = lo + frac[i % len(frac)] * (hi - lo)
            sets.append(to)
        for n, to in enumerate(sets):
            self.js(MOVE, panel, to)
            info = wait_for(where + ": the panel to show the moved sliders",
                            lambda: (lambda r: r if all(abs(float(s["value"]) - to[s["name"]]) <= 1e-12 * max(1, abs(to[s["name"]]))
                                                        for s in r["sliders"]) else None)(self.js(READ_PANEL, panel)))
            self.assertEqual(info["error"], "", where)
            # The inputs as the panel read them from its sliders.
            at = {s["name"]: float(s["value"]) for s in info["sliders"]}
            want = exec_value(self.model, at)
            got = float(info["shown"])
            self.assertLessEqual(abs(got - want), 1e-12 * abs(want),
                                 "%s: set %d at %s: the panel shows %r, nudge exec gives %r" % (where, n, at, got, want))

        # A click on the first slider, as a person would: the browser picks
        # the value.
        first = panel.find_element(By.CSS_SELECTOR, "input.nudge-explore-slider")
        d.execute_script("arguments[0].scrollIntoView({block: 'center'})", first)
        before = self.js(READ_PANEL, panel)["sliders"][0]["value"]
        # The offset is from the slider's centre: a third of its width to
        # the left, about a sixth of the way along its range.
        ActionChains(d).move_to_element_with_offset(first, -first.size["width"] // 3, 0).click().perform()
        try:
            info = wait_for(where + ": a click to move the slider",
                            lambda: (lambda r: r if r["sliders"][0]["value"] != before else None)(self.js(READ_PANEL, panel)))
        except AssertionError:
            d.save_screenshot(os.path.join(OUT, "click-failed.png"))
            raise
        at = {s["name"]: float(s["value"]) for s in info["sliders"]}
        want = exec_value(self.model, at)
        self.assertLessEqual(abs(float(info["shown"]) - want), 1e-12 * abs(want), where + ": after a click at %s" % at)

        # The keyboard: the right arrow moves the slider a hundredth of its span.
        before = info["sliders"][0]
        first.send_keys(Keys.ARROW_RIGHT)
        info = wait_for(where + ": a key to move the slider",
                        lambda: (lambda r: r if r["sliders"][0]["value"] != before["value"] else None)(self.js(READ_PANEL, panel)))
        step = (float(info["sliders"][0]["value"]) - float(before["value"])) / (float(before["max"]) - float(before["min"]))
        self.assertAlmostEqual(step, 0.01, places=9, msg=where + ": the arrow key's step")
        at = {s["name"]: float(s["value"]) for s in info["sliders"]}
        want = exec_value(self.model, at)
        self.assertLessEqual(abs(float(info["shown"]) - want), 1e-12 * abs(want), where + ": after a key at %s" % at)
        return len(sets) + 3

    def test_1_notebook(self):
        """A demo notebook run in the classic Notebook with the nudge kernel."""
        d = self.driver
        d.get("%s/notebooks/%s?token=%s" % (self.base, NOTEBOOK, self.token))
        wait_for("the kernel to start",
                 lambda: self.js("return !!(window.Jupyter && Jupyter.notebook && Jupyter.notebook.kernel"
                                 " && Jupyter.notebook.kernel.is_connected())"))
        self.assertEqual(self.js("return Jupyter.notebook.kernel.name"), "nudge")
        # A what-if panel at the end, then every cell.
        self.js("const c = Jupyter.notebook.insert_cell_at_bottom('code');"
                "c.set_text(arguments[0]); Jupyter.notebook.execute_all_cells();", "explore %s top=4" % OUTPUT)
        done = ("return Jupyter.notebook.get_cells().every(c => c.cell_type !== 'code' ||"
                " typeof c.input_prompt_number === 'number')"
                " && document.querySelector('#kernel_indicator_icon').classList.contains('kernel_idle_icon')")
        try:
            wait_for("every cell to run", lambda: self.js(done))
        except AssertionError:
            d.save_screenshot(os.path.join(OUT, "notebook-failed.png"))
            print(self.js("return [Jupyter.notebook.get_cells().map(c => c.input_prompt_number),"
                          " document.querySelector('#kernel_indicator_icon').className]"), file=sys.stderr)
            raise
        errors = self.js("return Array.from(document.querySelectorAll('.output_error')).map(e => e.textContent)")
        self.assertEqual(errors, [], "cells failed")

        # The tornado chart: an SVG image in a figure.
        imgs = self.js("return Array.from(document.querySelectorAll('figure.nudge-chart img'))"
                       ".filter(i => /tornado/i.test(i.alt)).map(i => i.src)")
        self.assertTrue(imgs, "no tornado chart in the page")
        prefix = "data:image/svg+xml;base64,"
        self.assertTrue(imgs[0].startswith(prefix), imgs[0][:60])
        svg = base64.b64decode(imgs[0][len(prefix):]).decode()
        self.assertIn("<svg", svg)
        self.assertIn("shop_rate", svg)

        # Completion through the page's kernel connection.
        code = "drivers unit_c"
        reply = d.execute_async_script(
            "const done = arguments[arguments.length - 1];"
            "Jupyter.notebook.kernel.complete(arguments[0], arguments[0].length, r => done(r.content));", code)
        self.assertEqual(reply["status"], "ok")
        self.assertIn("unit_cost", reply["matches"])
        reply = d.execute_async_script(
            "const done = arguments[arguments.length - 1];"
            "Jupyter.notebook.kernel.complete('breakeven unit_cost = 105 over sh', 32, r => done(r.content));")
        self.assertIn("shop_rate", reply["matches"])

        # Every panel (the notebook's own and the one added) ran its script;
        # the last one is checked.
        wait_for("every what-if panel in the notebook to set itself up",
                 lambda: self.js("const all = document.querySelectorAll('div.nudge-explore');"
                                 " return all.length >= 2 && Array.from(all).every(p => p.querySelector('.nudge-explore-live'))"))
        panel = d.find_elements(By.CSS_SELECTOR, "div.nudge-explore")[-1]
        self.check_panel(panel, "notebook")
        d.save_screenshot(os.path.join(OUT, "notebook.png"))
        # Leave the page without its question about unsaved changes.
        self.js("Jupyter.notebook.set_dirty(false); window.onbeforeunload = null;")

    def open_from_disk(self, path, where, shot):
        """Opens the HTML file at path from disk and checks its what-if panel."""
        d = self.driver
        d.get("file://" + path)
        panel = wait_for("the what-if panel in " + where,
                         lambda: d.find_elements(By.CSS_SELECTOR, "div.nudge-explore[data-ready]"))[0]
        wait_for("the panel's sliders", lambda: panel.find_elements(By.CSS_SELECTOR, ".nudge-explore-live"))
        # The panel's script is in the file: no script of ours is fetched.
        self.assertEqual(self.js("return document.querySelectorAll('script[src*=nudge]').length"), 0)
        n = self.check_panel(panel, where)
        bars = self.js("return arguments[0].querySelectorAll('svg.nudge-explore-bars rect').length", panel)
        self.assertGreaterEqual(bars, 5)
        d.save_screenshot(os.path.join(OUT, shot))
        print("\n  %s: %d positions of the sliders compared with nudge exec --json" % (where, n), file=sys.stderr)

    def notebook_with_panel(self, name, top):
        """Writes the demo notebook with a what-if panel added at its end."""
        with open(os.path.join(REPO, "notebooks", NOTEBOOK)) as f:
            nb = json.load(f)
        nb["cells"].append({"cell_type": "code", "execution_count": None, "id": "test-panel", "metadata": {},
                            "outputs": [], "source": "explore %s top=%d" % (OUTPUT, top)})
        path = os.path.join(self.nbdir, name)
        with open(path, "w") as f:
            json.dump(nb, f)
        return path

    def test_2_nbconvert_html_from_disk(self):
        """nbconvert's HTML of the notebook executed with the kernel, opened
        from disk."""
        src = self.notebook_with_panel("panel.ipynb", 5)
        r = subprocess.run([PY, "-m", "nbconvert", "--to", "html", "--execute", "--ExecutePreprocessor.kernel_name=nudge",
                            "--ExecutePreprocessor.timeout=%d" % int(GUARD), "--output-dir", OUT, "--output", "nbconvert-panel", src],
                           env=self.env, capture_output=True, text=True, timeout=GUARD)
        self.assertEqual(r.returncode, 0, r.stdout + r.stderr)
        self.open_from_disk(os.path.join(OUT, "nbconvert-panel.html"), "nbconvert's HTML", "nbconvert-panel.png")

    def test_3_report_from_disk(self):
        """The report of nudge run, opened from disk."""
        src = self.notebook_with_panel("report.ipynb", 6)
        html = os.path.join(OUT, "report.html")
        r = subprocess.run([NUDGE, "run", "--html", html, "-o", os.path.join(self.tmp, "report-out.ipynb"), src],
                           env=self.env, capture_output=True, text=True, timeout=GUARD)
        self.assertEqual(r.returncode, 0, r.stdout + r.stderr)
        self.open_from_disk(html, "the report of nudge run", "report-panel.png")

    def test_5_two_panels_in_a_report(self):
        """A report of nudge run with two what-if panels added (and any the
        demo notebook holds) carries the panels' script once (at the end of
        the page), and every panel works."""
        src = self.notebook_with_panel("two-panels.ipynb", 3)
        with open(src) as f:
            nb = json.load(f)
        nb["cells"].append({"cell_type": "code", "execution_count": None, "id": "test-panel-2", "metadata": {},
                            "outputs": [], "source": "explore %s top=5" % OUTPUT})
        with open(src, "w") as f:
            json.dump(nb, f)
        html = os.path.join(OUT, "report-two-panels.html")
        r = subprocess.run([NUDGE, "run", "--html", html, "-o", os.path.join(self.tmp, "two-panels-out.ipynb"), src],
                           env=self.env, capture_output=True, text=True, timeout=GUARD)
        self.assertEqual(r.returncode, 0, r.stdout + r.stderr)
        with open(html) as f:
            page = f.read()
        # The script's first line, once in the page; the data of the two
        # panels added, and of any the demo notebook holds.
        self.assertEqual(page.count("nudge what-if panel: an evaluator"), 1, "copies of the panels' script")
        panels = page.count('class="nudge-explore-data"')
        self.assertGreaterEqual(panels, 2, "panels")
        d = self.driver
        d.get("file://" + html)
        wait_for("every panel's sliders",
                 lambda: self.js("const all = document.querySelectorAll('div.nudge-explore');"
                                 " return all.length == arguments[0] && Array.from(all).every(p => p.querySelector('.nudge-explore-live'))",
                                 panels))
        n = 0
        for k, panel in enumerate(d.find_elements(By.CSS_SELECTOR, "div.nudge-explore")):
            n += self.check_panel(panel, "panel %d of the two-panel report" % (k + 1))
        d.save_screenshot(os.path.join(OUT, "report-two-panels.png"))
        print("\n  two-panel report: %d positions of the sliders compared with nudge exec --json" % n, file=sys.stderr)

    def test_4_saved_notebook_trust(self):
        """A saved notebook opened again is not trusted: the panel shows its
        table and the note on trust; once trusted, its sliders."""
        src = self.notebook_with_panel("saved-src.ipynb", 3)
        saved = os.path.join(self.nbdir, "saved.ipynb")
        r = subprocess.run([NUDGE, "run", "--html", os.path.join(self.tmp, "saved.html"), "-o", saved, src],
                           env=self.env, capture_output=True, text=True, timeout=GUARD)
        self.assertEqual(r.returncode, 0, r.stdout + r.stderr)
        d = self.driver
        d.get("%s/notebooks/saved.ipynb?token=%s" % (self.base, self.token))
        wait_for("the saved notebook to load",
                 lambda: self.js("return !!(window.Jupyter && Jupyter.notebook && Jupyter.notebook._fully_loaded)"))
        self.assertFalse(self.js("return Jupyter.notebook.trusted"))
        statics = self.js("return Array.from(document.querySelectorAll('.nudge-explore-static')).map(e => e.textContent)")
        self.assertTrue(statics, "no panel in the saved notebook")
        self.assertTrue(all("Trust Notebook" in t and "unit_cost at low" in t for t in statics), statics)
        self.assertEqual(self.js("return document.querySelectorAll('.nudge-explore-live').length"), 0)
        self.js("document.querySelector('.nudge-explore-static').scrollIntoView({block: 'center'})")
        d.save_screenshot(os.path.join(OUT, "saved-untrusted.png"))
        # File > Trust Notebook, and the dialog's Trust button.
        self.js("Jupyter.notebook.trust_notebook()")
        button = wait_for("the trust dialog", lambda: [b for b in d.find_elements(By.CSS_SELECTOR, ".modal-footer button")
                                                     if b.text.strip() == "Trust" and b.is_displayed()])[0]
        button.click()
        try:
            wait_for("the panels' sliders once trusted",
                     lambda: self.js("const all = document.querySelectorAll('div.nudge-explore');"
                                     " return Jupyter.notebook.trusted && all.length >= 2 &&"
                                     " Array.from(all).every(p => p.querySelector('.nudge-explore-live'))"))
        except AssertionError:
            d.save_screenshot(os.path.join(OUT, "saved-trust-failed.png"))
            print(self.js("return [Jupyter.notebook.trusted, document.querySelectorAll('div.nudge-explore').length,"
                          " document.querySelectorAll('.nudge-explore-live').length, !!window.nudgeExplore,"
                          " document.querySelectorAll('script.nudge-explore-data').length, location.href]"), file=sys.stderr)
            raise
        self.js("document.querySelector('.nudge-explore-live').scrollIntoView({block: 'center'})")
        d.save_screenshot(os.path.join(OUT, "saved-trusted.png"))
        self.js("Jupyter.notebook.set_dirty(false); window.onbeforeunload = null;")


if __name__ == "__main__":
    unittest.main()
