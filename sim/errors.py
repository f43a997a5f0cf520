"""The one error type for bad input: a list of problems, each in plain words."""

from __future__ import annotations


class InputError(ValueError):
    """Bad input: one message per problem, each naming key or option, value and what is allowed.

    Attributes
    ----------
    problems : list[str]
        One line per problem.
    source : str
        Where the input came from (file name), or empty.
    """

    def __init__(self, problems: list[str] | str, source: str = ""):
        if isinstance(problems, str):
            problems = [problems]
        self.problems = list(problems)
        self.source = source
        head = f"{source}: " if source else ""
        if len(self.problems) == 1:
            text = head + self.problems[0]
        else:
            text = (
                head
                + f"{len(self.problems)} problems:\n"
                + "\n".join(f"  - {p}" for p in self.problems)
            )
        super().__init__(text)
