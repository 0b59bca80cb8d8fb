"""Jupyter conformance suite for the nudge kernel (Debian python3-jupyter-kernel-test).

Run with /usr/bin/python3 -m unittest from this directory, with the nudge
kernelspec on JUPYTER_PATH (make jupyter-test does this).
"""
import unittest

import jupyter_kernel_test


class NudgeKernelTests(jupyter_kernel_test.KernelTests):
    kernel_name = "nudge"
    language_name = "nudge"
    file_extension = ".nudge"

    # stdout through print, stderr through a warning (a step function on
    # the path of an analysed output is reported on stderr).
    code_hello_world = 'print "hello, world"'
    code_stderr = "input q = 3.5\ny = floor(q) * 2\ndrivers y"

    completion_samples = [
        {"text": "input shop_rate = 60\nsho", "matches": {"shop_rate"}},
        {"text": "x = sqr", "matches": {"sqrt"}},
    ]
    complete_code_samples = ["input a = 1", "drivers total", "x = (1 +\n 2)"]
    incomplete_code_samples = ["x = (1 +", "x = max(1,", "y = 2 *"]
    invalid_code_samples = ["x = )", "input = 3", "q = 3 4"]

    code_inspect_sample = "sqrt"

    code_generate_error = "x = shop_rat * 2"

    code_execute_result = [
        {"code": "2 + 3", "result": "2 + 3 = 5"},
        {"code": "input r = 60 [$/h]\ninput t = 90 [min]\nt * r", "result": "t * r = $90"},
    ]

    code_display_data = [
        {"code": "input a = 2 [kg]\ninput p = 3 [$/kg]\nc = a * p\ndrivers c", "mime": "application/json"},
        {"code": "input a = 2 [kg]\ninput p = 3 [$/kg]\nc = a * p\ndrivers c", "mime": "text/html"},
    ]

    code_history_pattern = "2 + *"
    supported_history_operations = ("tail", "range", "search")

    code_clear_output = ""


if __name__ == "__main__":
    unittest.main()
