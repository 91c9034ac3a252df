"""The terminal console prints text from the inputs as it is (common practice: an audit shows the
designators and part numbers it was given, unaltered): no emoji code is replaced."""

import io

from bomcheck.render import terminal


def test_emoji_codes_in_input_text_print_as_they_are():
    console = terminal.make_console(file=io.StringIO(), width=80, no_color=True)
    console.print("MPN :fire: and :warning:")
    assert console.file.getvalue() == "MPN :fire: and :warning:\n"
