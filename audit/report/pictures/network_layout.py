"""The layout of the plant's network picture, shared by the SVG (HTML report) and the PNG (the
workbook's Overview): one box per step, one arrow per stream, laid out left to right in layers.

Layout: the layered (Sugiyama) method of the grandalf package, pure Python: cycles are broken by
reversing feedback edges, steps are put in layers, crossings are reduced by repeated barycentre
sweeps and long edges are routed through dummy points. grandalf lays the layers top to bottom; the
picture turns them to run left to right. Streams that enter or leave the plant (a feed no step
makes, a product no step takes) are short arrows into or out of their step's box.
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass, field

from grandalf.graphs import Edge, Graph, Vertex  # type: ignore[import-untyped]
from grandalf.layouts import SugiyamaLayout  # type: ignore[import-untyped]

from audit.report.pictures.svg import step_marks
from audit.results import AuditResult

BOX_W = 112.0  # box width [px]
STUB = 44.0  # length of a feed or product arrow [px]
LAYER_GAP = 92.0  # between layers, room for the stream labels [px]
ROW_GAP = 30.0  # between boxes of one layer [px]
MARGIN = 16.0
COMPONENT_GAP = 36.0

Point = tuple[float, float]


@dataclass
class Arrow:
    """One stream: the points its line passes (the arrow head at the last), where its label (the
    stream id) stands, and its role: ``feed``, ``product`` (drawn with their step's box),
    ``internal`` or ``internal recycle``."""

    stream: str
    points: list[Point]
    label: Point
    role: str


@dataclass
class Network:
    """The laid-out picture: its size [px], the boxes (centre ``x``, ``y``, ``height``; width
    :data:`BOX_W`) with their kind, mark (``error``, ``warning`` or None) and feed and product
    arrows, and the arrows between boxes."""

    width: float
    height: float
    boxes: list[Box]
    kinds: dict[str, str]
    marks: dict[str, str | None]
    arrows: list[Arrow]
    title: str


@dataclass
class Box:
    """A step's box: its centre, height and the streams on its sides."""

    step: str
    height: float
    feeds: list[str] = field(default_factory=list)
    products: list[str] = field(default_factory=list)
    ins: list[str] = field(default_factory=list)  # every stream in, by its port, top first
    outs: list[str] = field(default_factory=list)  # every stream out, by its port, top first
    x: float = 0.0  # centre
    y: float = 0.0
    group: int = 0  # the connected part of the network it belongs to

    def port(self, stream_id: str, side: str) -> tuple[float, float]:
        """Where ``stream_id`` meets the box: on the left side (``in``) or the right (``out``)."""
        ids = self.ins if side == "in" else self.outs
        y = self.y - self.height / 2 + self.height * (ids.index(stream_id) + 1) / (len(ids) + 1)
        return (self.x - BOX_W / 2 if side == "in" else self.x + BOX_W / 2), y

    def stubs(self) -> list[Arrow]:
        """The box's feed and product arrows."""
        drawn = []
        for role, ids in (("feed", self.feeds), ("product", self.products)):
            for stream_id in ids:
                x, y = self.port(stream_id, "in" if role == "feed" else "out")
                x0, x1 = (x - STUB, x) if role == "feed" else (x, x + STUB)
                drawn.append(Arrow(stream_id, [(x0, y), (x1, y)], ((x0 + x1) / 2, y - 4), role))
        return drawn


class _View:
    """What grandalf reads of a vertex: its size (w across a layer, h along the layers)."""

    def __init__(self, w: float, h: float) -> None:
        self.w, self.h = w, h
        self.xy = (0.0, 0.0)


class _EdgeView:
    def __init__(self) -> None:
        self.pts: list[tuple[float, float]] = []

    def setpath(self, pts: list[tuple[float, float]]) -> None:
        self.pts = list(pts)


def network(result: AuditResult) -> Network:
    """Lay out the network of ``result``."""
    producer = {o: s.id for s in result.steps for o in s.outlets}
    consumer = {i: s.id for s in result.steps for i in s.inlets}
    boxes = {s.id: Box(s.id, 0.0) for s in result.steps}
    internal: list[tuple[str, str, str]] = []  # (stream, from step, to step)
    for stream in result.streams:
        source, target = producer.get(stream.id), consumer.get(stream.id)
        if source and target:
            internal.append((stream.id, source, target))
        elif target:
            boxes[target].feeds.append(stream.id)
        elif source:
            boxes[source].products.append(stream.id)
    ins: dict[str, int] = defaultdict(int)
    outs: dict[str, int] = defaultdict(int)
    for _, a, b in internal:
        outs[a] += 1
        ins[b] += 1
    for box in boxes.values():
        ports = max(len(box.feeds) + ins[box.step], len(box.products) + outs[box.step])
        box.height = max(52.0, 16.0 * (ports + 1))
    routes: dict[str, list[tuple[float, float]]] = {}
    width, height = _place(boxes, [e for e in internal if e[1] != e[2]], routes)
    _order_ports(boxes, internal)
    title = f"Network of {result.name}: {len(boxes)} steps, {len(result.streams)} streams"
    return Network(
        width,
        height,
        list(boxes.values()),
        {s.id: s.kind for s in result.steps},
        step_marks(result),
        _edges(boxes, internal, routes),
        title,
    )


def _place(
    boxes: dict[str, Box],
    edges: list[tuple[str, str, str]],
    routes: dict[str, list[tuple[float, float]]],
) -> tuple[float, float]:
    """Lay the boxes out (centres in ``box.x``, ``box.y``) and the streams between them (the
    points each passes, into ``routes``); the picture's width and height."""
    vertices = {}
    for box in boxes.values():
        vertex = Vertex(box.step)
        vertex.view = _View(box.height, BOX_W)  # grandalf's w runs across a layer: our height
        vertices[box.step] = vertex
    graph_edges = [Edge(vertices[a], vertices[b], data=stream) for stream, a, b in edges]
    for edge in graph_edges:
        edge.view = _EdgeView()
    graph = Graph(list(vertices.values()), graph_edges)
    top = MARGIN
    width = 0.0
    for group, component in enumerate(graph.C):
        layout = SugiyamaLayout(component)
        layout.xspace, layout.yspace = ROW_GAP, LAYER_GAP
        layout.init_all()
        layout.draw(4)
        placed = [(boxes[v.data], v.view.xy) for v in component.sV]
        low = min(xy[0] - box.height / 2 for box, xy in placed)
        left = min(xy[1] - BOX_W / 2 for box, xy in placed)
        dx, dy = MARGIN + STUB + BOX_W / 2 - left, top - low
        for box, (gx, gy) in placed:
            box.x, box.y, box.group = gy + dx, gx + dy, group
        back = sum(1 for e in component.sE if e.v[1].view.xy[1] <= e.v[0].view.xy[1])
        for edge in component.sE:
            routes[edge.data] = [(gy + dx, gx + dy) for gx, gy in edge.view.pts]
        bottom = max(b.y + b.height / 2 for b, _ in placed)
        width = max(width, max(b.x + BOX_W / 2 for b, _ in placed) + STUB + MARGIN + 40)
        top = bottom + COMPONENT_GAP + (16 + 12 * back if back else 0)
    return max(width, 240.0), top - COMPONENT_GAP + MARGIN + 8


def _order_ports(boxes: dict[str, Box], internal: list[tuple[str, str, str]]) -> None:
    """Give each stream its place on its boxes' sides: feeds at the top of the left side, then the
    streams in by the height of the box they come from; the streams out by the height of the box
    they go to, then the products; recycles (to an earlier layer) at the bottom."""
    into: dict[str, list[tuple[float, str]]] = defaultdict(list)
    out_of: dict[str, list[tuple[float, str]]] = defaultdict(list)
    for stream_id, a, b in internal:
        back = boxes[b].x <= boxes[a].x
        into[b].append((math.inf if back else boxes[a].y, stream_id))
        out_of[a].append((math.inf if back else boxes[b].y, stream_id))
    for box in boxes.values():
        box.ins = box.feeds + [s for _, s in sorted(into[box.step])]
        box.outs = [s for _, s in sorted(out_of[box.step])] + box.products


def _edges(
    boxes: dict[str, Box],
    internal: list[tuple[str, str, str]],
    routes: dict[str, list[tuple[float, float]]],
) -> list[Arrow]:
    """Arrows between boxes: out of the producer's right side, into the consumer's left side."""
    drawn = []
    lanes: dict[str, int] = defaultdict(int)
    for stream_id, a, b in internal:
        start, end = boxes[a].port(stream_id, "out"), boxes[b].port(stream_id, "in")
        if b != a and boxes[b].x > boxes[a].x:
            drawn.append(_forward(start, end, routes[stream_id][1:-1], stream_id))
        else:
            lane = lanes[a]
            lanes[a] += 1
            drawn.append(_back(boxes, boxes[a].group, start, end, stream_id, lane))
    return drawn


def _forward(
    start: tuple[float, float],
    end: tuple[float, float],
    through: list[tuple[float, float]],
    stream_id: str,
) -> Arrow:
    """A stream to a later layer through the points the layout kept for it (one per layer
    crossed): level through each layer, turning in the gaps between layers."""
    level = [start]
    for x, y in through:
        level += [(x - BOX_W / 2, y), (x + BOX_W / 2, y)]
    level.append(end)
    pts = [level[0]]
    for (x0, y0), (x1, y1) in zip(level[:-1], level[1:], strict=True):
        if abs(y1 - y0) > 0.5:
            mid = x1 - min(LAYER_GAP / 2, (x1 - x0) / 2)
            pts += [(mid, y0), (mid, y1)]
        pts.append((x1, y1))
    first = (pts[0][0] + pts[1][0]) / 2
    return Arrow(stream_id, pts, (first, pts[0][1] - 4), "internal")


def _back(
    boxes: dict[str, Box],
    group: int,
    start: tuple[float, float],
    end: tuple[float, float],
    stream_id: str,
    lane: int,
) -> Arrow:
    """A recycle to the same or an earlier layer: right, down below the boxes it passes, left, up,
    and into the consumer's left side."""
    left, right = end[0] - 14 - 6 * lane, start[0] + 14 + 6 * lane
    below = [
        b.y + b.height / 2
        for b in boxes.values()
        if b.group == group and left - BOX_W <= b.x <= right + BOX_W
    ]
    low = max(below, default=max(start[1], end[1])) + 16 + 12 * lane
    pts = [start, (right, start[1]), (right, low), (left, low), (left, end[1]), end]
    return Arrow(stream_id, pts, ((left + right) / 2, low - 4), "internal recycle")
