"""protolint: check measurement plans for rated clinical-trial outcomes.

The package is organised the way data flows through it:

* ``protolint.plan``     YAML text -> located tree -> schema findings -> typed plan
* ``protolint.rules``    typed plan + policy -> findings
* ``protolint.report``   findings -> text, JSON, SARIF, JUnit, Markdown
* ``protolint.stats``    pure numerical methods (no I/O, no knowledge of plans)
* ``protolint.render``   typed plan -> controlled documents (HTML, PDF, Markdown, iCalendar)
* ``protolint.commands`` thin command-line layer, one module per command
"""

__version__ = "0.1.0"

CAUTION = (
    "protolint checks a measurement plan against common reliability practice and published "
    "methods. It does not replace the trial statistician, the sponsor's SOPs, ethics-board "
    "review, applicable regulations or licensed clinical practice; its numbers are planning "
    "aids to be confirmed by a qualified person."
)
