"""Predicts dock demand in the Larkhaven bike network (demo)."""
import numpy as np
import torch

edges = np.loadtxt("lanes/lanes.csv", delimiter=",", skiprows=2, usecols=(0, 1), dtype=np.int64)
x = np.load("lanes/dock_features.npy")
y = np.load("lanes/demand.npy")
splits = np.load("lanes/splits.npz")
depot_edges = np.load("depots/edge_index.npy")
checkpoint = torch.load("checkpoints/dock_graph.pt")
