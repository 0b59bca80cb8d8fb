"""Jupyter conformance suite for the nudge kernel (Debian python3-jupyter-kernel-test).

Run with /usr/bin/python3 -m unittest from this directory, with the nudge
kernelspec on JUPYTER_PATH (make jupyter-test does this).
"""
import unittest

import jupyter_kernel_test
from jupyter_client.manager import start_new_kernel
from jupyter_kernel_test.msgspec_v5 import validate_message

# Every wait below is a hang guard, never a budget: the machine that runs
# the tests may be busy with other work, and a message that takes a second
# to arrive is late, not wrong.
GUARD = 120

# The library's own default wait for a reply (15 s) is read at run time by
# test_kernel_info.
jupyter_kernel_test.TIMEOUT = GUARD


class NudgeKernelTests(jupyter_kernel_test.KernelTests):
    kernel_name = "nudge"
    language_name = "nudge"
    file_extension = ".nudge"

    @classmethod
    def setUpClass(cls):
        cls.km, cls.kc = start_new_kernel(kernel_name=cls.kernel_name, startup_timeout=GUARD)

    def get_non_kernel_info_reply(self, timeout=None):
        """The library's reply wait, with the hang guard for any timeout."""
        return super().get_non_kernel_info_reply(timeout=GUARD)

    def execute_helper(self, code, timeout=None, silent=False, store_history=True, stop_on_error=True):
        """The library's execute_helper makes the same checks but gives the
        busy status 1 s and every later iopub message 0.1 s to arrive, which a
        loaded machine exceeds. Here each message is waited for (up to the
        hang guard), and a late message of an earlier request, which the
        library's 0.1 s flush may have missed, is validated and skipped."""
        msg_id = self.kc.execute(code=code, silent=silent, store_history=store_history, stop_on_error=stop_on_error)
        reply = self.get_non_kernel_info_reply()
        validate_message(reply, "execute_reply", msg_id)

        def next_own():
            while True:
                msg = self.kc.get_iopub_msg(timeout=GUARD)
                if msg["parent_header"].get("msg_id") == msg_id:
                    validate_message(msg, msg["msg_type"], msg_id)
                    return msg
                validate_message(msg)

        busy = next_own()
        self.assertEqual(busy["msg_type"], "status")
        self.assertEqual(busy["content"]["execution_state"], "busy")
        output_msgs = []
        while True:
            msg = next_own()
            if msg["msg_type"] == "status":
                self.assertEqual(msg["content"]["execution_state"], "idle")
                break
            if msg["msg_type"] == "execute_input":
                self.assertEqual(msg["content"]["code"], code)
                continue
            output_msgs.append(msg)
        return reply, output_msgs

    # stdout through print, stderr through a warning (a step function on
    # the path of an analysed output is reported on stderr).
    code_hello_world = 'print "hello, world"'
    code_stderr = "input q = 3.5\ny = floor(q) * 2\ndrivers y"

    completion_samples = [
        {"text": "input shop_rate = 60\nsho", "matches": {"shop_rate"}},
        {"text": "x = sqr", "matches": {"sqrt"}},
    ]
    # is_complete agrees with the parser: a line that ends with a binary
    # operator continues on the next one; a trailing comma or '=' is an error
    # at once, not a request for more lines.
    complete_code_samples = ["input a = 1", "drivers total", "x = (1 +\n 2)", "y = 2 *\n  3", "y = a +  # more\n\n  b"]
    incomplete_code_samples = ["x = (1 +", "x = max(1,", "y = 2 *", "y = a and", "y = a +  # more\n"]
    invalid_code_samples = ["x = )", "input = 3", "q = 3 4", "x = a,", "x =", "x = a +\ninput b = 2"]

    code_inspect_sample = "sqrt"

    code_generate_error = "x = shop_rat * 2"

    code_execute_result = [
        {"code": "2 + 3", "result": "2 + 3 = 5"},
        {"code": "input r = 60 [$/h]\ninput t = 90 [min]\nt * r", "result": "t * r = $90"},
    ]

    code_display_data = [
        # A result's JSON travels under a vendor type (a scenario's definition
        # shows no caution, the one display without it).
        {"code": "input a = 2 [kg]\nscenario heavy: a = 3", "mime": "application/vnd.nudge.result+json"},
        {"code": "input a = 2 [kg]\ninput p = 3 [$/kg]\nc = a * p\ndrivers c", "mime": "text/html"},
    ]

    code_history_pattern = "2 + *"
    supported_history_operations = ("tail", "range", "search")

    code_clear_output = ""


if __name__ == "__main__":
    unittest.main()
