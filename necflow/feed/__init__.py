"""The feed chain as ABCD two-ports: lines, lumped parts, transformers, chokes."""

from necflow.feed.chain import (
    Choke,
    FeedChain,
    LineSection,
    LumpedPart,
    Transformer,
    build_chain,
)

__all__ = ["Choke", "FeedChain", "LineSection", "LumpedPart", "Transformer", "build_chain"]
