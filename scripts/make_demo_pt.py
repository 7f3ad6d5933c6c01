#!/usr/bin/python3
"""Writes demo/checkpoints/dock_graph.pt with the real torch.save (Debian python3-torch):
the Larkhaven lane graph as a training script would save it — a dict of tensors — with one
planted mistake: the test mask shares two docks with the training mask. Invented data.

    /usr/bin/python3 scripts/make_demo_pt.py
"""
import os

import numpy as np
import torch

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "demo", "checkpoints", "dock_graph.pt")

rng = np.random.default_rng(20261202)
n = 48
# A ring of docks with a few cross-town lanes, both directions stored.
pairs = [(i, (i + 1) % n) for i in range(n)] + [(i, (i + 12) % n) for i in range(0, n, 6)]
src = [u for u, v in pairs] + [v for u, v in pairs]
dst = [v for u, v in pairs] + [u for u, v in pairs]
edge_index = torch.tensor([src, dst], dtype=torch.long)
x = torch.tensor(rng.normal(size=(n, 6)), dtype=torch.float32)
y = torch.tensor(rng.integers(0, 3, n), dtype=torch.long)
order = rng.permutation(n)
train_mask = torch.zeros(n, dtype=torch.bool)
train_mask[order[:30]] = True
val_mask = torch.zeros(n, dtype=torch.bool)
val_mask[order[30:38]] = True
test_mask = torch.zeros(n, dtype=torch.bool)
test_mask[order[38:]] = True
test_mask[order[:2]] = True  # planted: two training docks leak into the test split

os.makedirs(os.path.dirname(OUT), exist_ok=True)
torch.save({"edge_index": edge_index, "x": x, "y": y, "train_mask": train_mask,
            "val_mask": val_mask, "test_mask": test_mask}, OUT)
print("wrote", OUT)
