"""Analyses: rating data (and optionally a plan) in, frozen result objects with ``to_json()`` out.

One module per command (``agreement``, ``consistency``, ``size``, ``design``, ...). Each returns
a frozen result object whose ``to_json()`` gives the plain-dict JSON form (undefined numbers
are ``None``, written as ``null``); the command modules only parse options, call and print.
"""
