"""Collect the messages of a force route, one line per cause with the ids it concerns.

A model of 100,000 members without a FORCEUNIT must not print 100,000 lines: the log groups the
GlobalIds (or entity ids) under one message per distinct text, shows the first few and counts
the rest.
"""

from __future__ import annotations

from dataclasses import dataclass, field

#: ids shown per message before "and N more"
SHOWN_IDS = 10


@dataclass
class MessageLog:
    """A per-call collector (not shared): ``add(text, id)`` then ``messages()``."""

    model: str
    _ids: dict[str, list[str]] = field(default_factory=dict)
    _nouns: dict[str, tuple[str, str]] = field(default_factory=dict)

    def add(self, text: str, ident: str | None = None, noun: tuple[str, str] = ("member", "members")) -> None:
        """Log ``text`` about ``ident``; ``noun`` is (singular, plural) of what the ids are."""
        self._nouns.setdefault(text, noun)
        ids = self._ids.setdefault(text, [])
        if ident is not None:
            ids.append(str(ident))

    def merge(self, other: MessageLog) -> None:
        """Add another log's messages (of another part of the same model) to this one."""
        for text, ids in other._ids.items():
            self._nouns.setdefault(text, other._nouns[text])
            self._ids.setdefault(text, []).extend(ids)

    def texts_of(self, ident: str) -> list[str]:
        """The texts logged about ``ident``, in the order first logged."""
        return [text for text, ids in self._ids.items() if ident in ids]

    def idents(self) -> set[str]:
        """Every id something was logged about."""
        return {i for ids in self._ids.values() for i in ids}

    def messages(self) -> list[str]:
        out = []
        for text, ids in self._ids.items():
            if not ids:
                out.append(f"{self.model}: {text}")
                continue
            uniq = sorted(set(ids))  # the same listing however the model was shared out
            shown = ", ".join(uniq[:SHOWN_IDS])
            more = f" and {len(uniq) - SHOWN_IDS} more" if len(uniq) > SHOWN_IDS else ""
            one, many = self._nouns[text]
            noun = one if len(uniq) == 1 else many
            out.append(f"{self.model}: {text} ({len(uniq)} {noun}: {shown}{more})")
        return out
