"""The feed chain as ABCD two-ports: lines, lumped parts, transformers."""

from necflow.feed.chain import FeedChain, LineSection, LumpedPart, Transformer, build_chain

__all__ = ["FeedChain", "LineSection", "LumpedPart", "Transformer", "build_chain"]
