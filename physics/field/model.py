"""The assembled field of a scene: every magnet, its images in the steel plates, B, H and dB/dx.

H comes from the magnets' charges (closed forms or dipole sets); B = mu0 (H + M), so inside a
magnet B includes its magnetisation (DESIGN.md, Physics).
"""
from __future__ import annotations

import numpy as np

from trapscape.scene.shapes import shape_of
from trapscape.scene.shapes.frames import to_body
from trapscape.scene.shapes.meshops import mesh_diagonal, nearest_mesh_sdf
from trapscape.scene.shapes.meshtree import pack_trees
from trapscape.scene.units import MU0
from trapscape.physics.field.box_distance import Boxes
from trapscape.physics.field.dipole_sum import dipole_H
from trapscape.physics.field.families import Family, evaluation_steps
from trapscape.physics.field.parts import body_bounds, part_magnetization, part_sdf, part_sources
from trapscape.physics.field.sources import Source, mirrored
from trapscape.physics.field.surfaces import evaluation_points

CHUNK = 250_000  # points per batch: bounds memory and lets long work report progress


class FieldModel:
    def __init__(self, scene, sources: list[Source]):
        self.scene = scene
        self.magnets = scene.magnets
        self.plates = scene.plates
        self.sources = sources
        self._steps = {}  # frozenset of excluded parts -> the evaluation steps
        self._body_boxes = None  # each magnet's body-frame bounding box, on first use
        self._boxes = None  # the axis-aligned boxes among the magnets (box_distance.Boxes)
        self._others = None  # the indices of the other magnets
        self._forest = None  # the mesh parts and their packed search trees, on first use

    @classmethod
    def from_scene(cls, scene, accuracy: float = 1e-3) -> "FieldModel":
        """The model of a scene: every magnet's sources (parts.part_sources) and their images.

        Parameters
        ----------
        scene : trapscape.scene.model.Scene
            The loaded scene, SI units.
        accuracy : float
            Relative accuracy (dimensionless) the dipole sets aim for (parts.default_cell_size).

        Returns
        -------
        FieldModel

        Raises
        ------
        trapscape.scene.errors.SceneError
            When a magnet's dipole set cannot be built (parts.part_sources).
        """
        sources = []
        for index, magnet in enumerate(scene.magnets):
            sources.extend(part_sources(magnet, index, accuracy))
        images = []
        for plate in scene.plates:
            suffix = f" (image in {plate.name})"
            images.extend(mirrored(s, plate.point, plate.normal, suffix) for s in sources)
        return cls(scene, sources + images)

    # -- H of the charges -------------------------------------------------------------------

    def applied_H(self, points, exclude=(), gradient=False, progress=None):
        """H (and dH/dx) of every source whose part index is not in ``exclude``.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        exclude : iterable of int
            Indices of the magnets whose sources (and images) are left out.
        gradient : bool
            Also return dH_i/dx_j.
        progress : callable, optional
            Called as progress(done, total) after each batch of CHUNK points.

        Returns
        -------
        H : numpy.ndarray, shape (N, 3)
            A/m.
        G : numpy.ndarray, shape (N, 3, 3)
            Only with gradient=True: G[n, i, j] = dH_i/dx_j, A/m^2.
        """
        points = np.ascontiguousarray(points, dtype=float).reshape(-1, 3)
        if len(points) <= CHUNK and progress is None:  # one batch: its arrays are the answer
            H, G = self._H_batch(points, set(exclude), gradient)
            return (H, G) if gradient else H
        H = np.zeros_like(points)
        G = np.zeros((len(points), 3, 3)) if gradient else None
        for start in range(0, len(points), CHUNK):
            chunk = slice(start, start + CHUNK)
            h, g = self._H_batch(points[chunk], set(exclude), gradient)
            H[chunk] = h
            if gradient:
                G[chunk] = g
            if progress is not None:
                progress(min(start + CHUNK, len(points)), len(points))
        return (H, G) if gradient else H

    def _evaluation_steps(self, exclude):
        """The chosen sources, runs of boxes or cylinders packed into one kernel call each
        (physics/field/families.py), built once per set of excluded parts."""
        key = frozenset(exclude)
        if key not in self._steps:
            self._steps[key] = evaluation_steps([s for s in self.sources if s.part not in key])
        return self._steps[key]

    def _H_batch(self, points, exclude, gradient):
        chosen = [s for s in self.sources if s.part not in exclude]
        H = np.zeros_like(points)
        G = np.zeros((len(points), 3, 3)) if gradient else None
        plain_sets = [s for s in chosen if s.kind == "dipoles" and s.near is None]
        if plain_sets:
            positions = np.concatenate([s.dipole_positions for s in plain_sets])
            moments = np.concatenate([s.dipole_moments for s in plain_sets])
            _accumulate(H, G, dipole_H(points, positions, moments, gradient=gradient), gradient,
                        slice(None))
        for step in self._evaluation_steps(exclude):
            if isinstance(step, Family):
                step.add_H(points, gradient, H, G)
            elif step.near is not None:
                self._add_zoned(step, points, H, G, gradient)
            else:
                step.add_closed_form_H(points, gradient, H, G)
        return H, G

    @staticmethod
    def _add_zoned(source, points, H, G, gradient):
        """A part with an exact zone: its exact form there, its dipoles only outside it (they
        sit inside the zone, so their own field is never evaluated close to them)."""
        near = source.in_near_zone(points)
        some = near.any()
        if some:
            h, g = source.near.closed_form_H(points[near], gradient)
            H[near] += h
            if gradient:
                G[near] += g
        far = ~near if some else slice(None)  # all of them: no copy
        if not near.all():
            result = dipole_H(points[far], source.dipole_positions, source.dipole_moments,
                              gradient=gradient)
            _accumulate(H, G, result, gradient, far)

    def acting_on(self, index: int, images_only: bool = False) -> "FieldModel":
        """The model of the sources that act on part ``index``.

        All but the part's own charges (its images in the plates stay: they pull it to the plate);
        with images_only, the plate images alone (what acts on the rigid assembly as a whole). Used
        by physics/holding/forces.py.

        Parameters
        ----------
        index : int
            The magnet's index in the scene.
        images_only : bool
            Keep only the plate images.

        Returns
        -------
        FieldModel
            Sharing this model's scene and source objects.
        """
        keep = [s for s in self.sources
                if s.is_image or (not images_only and s.part != index)]
        return FieldModel(self.scene, keep)

    def H(self, points, progress=None):
        """H of every source at world points (applied_H with nothing excluded).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        progress : callable, optional
            Called as progress(done, total) after each batch of CHUNK points.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            A/m.
        """
        return self.applied_H(points, progress=progress)

    # -- B ----------------------------------------------------------------------------------
    # A point on a magnet's face is evaluated on its outer side: H, M and the inside flag are all
    # read at one evaluation point (physics/field/surfaces.py), so they cannot disagree.

    def _magnetization_at(self, where, owner) -> np.ndarray:
        M = np.zeros_like(where)
        for index, magnet in enumerate(self.magnets):
            mask = owner == index
            if mask.any():
                M[mask] = part_magnetization(magnet, where[mask])
        return M

    def magnetization(self, points) -> np.ndarray:
        """M at world points: the part's magnetisation inside it, zero outside and on a face.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            A/m, world frame; inside overlapping parts, the first part's (inside_magnet).
        """
        where, owner = evaluation_points(self.magnets, points)
        return self._magnetization_at(where, owner)

    def H_B_and_owner(self, points, progress=None):
        """H, B = mu0 (H + M) and the holding magnet at world points, from one decision (a point
        on a face taken on its outer side).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        progress : callable, optional
            Called as progress(done, total) after each batch of CHUNK points.

        Returns
        -------
        H : numpy.ndarray, shape (N, 3)
            A/m.
        B : numpy.ndarray, shape (N, 3)
            T; inside a magnet B includes its magnetisation.
        owner : numpy.ndarray of int, shape (N,)
            The magnet holding each point (inside_magnet), -1 in air and on a face.

        References
        ----------
        B = mu0 (H + M): Jackson, Classical Electrodynamics, 3rd ed., eq. 5.81.
        """
        where, owner = evaluation_points(self.magnets, points)
        H = self.applied_H(where, progress=progress)
        return H, MU0 * (H + self._magnetization_at(where, owner)), owner

    def B(self, points, progress=None):
        """B = mu0 (H + M) at world points: inside a magnet B includes its magnetisation.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        progress : callable, optional
            Called as progress(done, total) after each batch of CHUNK points.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            T; on a face, the outer side's value.
        """
        return self.H_B_and_owner(points, progress=progress)[1]

    def B_and_gradient(self, points, progress=None):
        """B and dB_i/dx_j at world points (a point on a face taken on its outer side).

        M is uniform inside a part, so the gradient is mu0 dH/dx there too (radially magnetised
        parts excepted inside: their dM/dx is not included).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.
        progress : callable, optional
            Called as progress(done, total) after each batch of CHUNK points.

        Returns
        -------
        B : numpy.ndarray, shape (N, 3)
            T.
        G : numpy.ndarray, shape (N, 3, 3)
            G[n, i, j] = dB_i/dx_j, T/m.
        """
        where, owner = evaluation_points(self.magnets, points)
        H, G = self.applied_H(where, gradient=True, progress=progress)
        return MU0 * (H + self._magnetization_at(where, owner)), MU0 * G

    # -- geometry ---------------------------------------------------------------------------

    def part_distances(self, points) -> np.ndarray:
        """Signed distance from world points to each magnet's surface (negative inside).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N, n_magnets)
            m; shape (N, 0) when the scene has no magnet.
        """
        points = np.asarray(points, dtype=float).reshape(-1, 3)
        if not self.magnets:
            return np.full((len(points), 0), np.inf)
        boxes, others = self.box_split()
        out = np.empty((len(points), len(self.magnets)))
        out[:, boxes.index] = boxes.table(points)
        for k in others:
            out[:, k] = part_sdf(self.magnets[k], points)
        return out

    def box_split(self) -> tuple[Boxes, list]:
        """The axis-aligned boxes (computed together) and the indices of the other magnets."""
        if self._boxes is None:
            self._boxes = Boxes.of(self.magnets)
            self._others = sorted(set(range(len(self.magnets))) - set(self._boxes.index.tolist()))
        return self._boxes, self._others

    def inside_magnet(self, points) -> np.ndarray:
        """Index of the magnet containing each point, -1 where none does (or on its face).

        The same decision that gives M in B (physics/field/surfaces.py).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray of int, shape (N,)
            Where parts overlap, the first one in the scene's order.
        """
        return evaluation_points(self.magnets, points)[1]

    def plate_distances(self, points) -> np.ndarray:
        """Signed distance from world points to each plate's face (negative behind it).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N, n_plates)
            m; shape (N, 0) when the scene has no plate.
        """
        points = np.asarray(points, dtype=float).reshape(-1, 3)
        if not self.plates:
            return np.full((len(points), 0), np.inf)
        return np.stack([(points - p.point) @ p.normal for p in self.plates], axis=1)

    def in_model(self, points) -> np.ndarray:
        """False behind a steel plate's face, where the mirror model says nothing.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray of bool, shape (N,)
        """
        distances = self.plate_distances(points)
        return np.all(distances >= 0.0, axis=1) if distances.shape[1] else np.ones(len(distances), bool)

    def clearance(self, points) -> np.ndarray:
        """Distance to the nearest magnet surface or plate face; negative inside or behind.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            World points, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            m; inf when the scene has neither magnets nor plates.
        """
        points = np.asarray(points, dtype=float).reshape(-1, 3)
        plates = self.plate_distances(points)
        best = plates.min(axis=1) if plates.shape[1] else np.full(len(points), np.inf)
        if not self.magnets:
            return best
        boxes, others = self.box_split()
        best = boxes.lower(points, best)  # all axis-aligned boxes in one call, exact
        if not others:
            return best
        # Every part's surface lies in its bounding box, so its distance is at least the box's
        # and at most that of the box's farthest corner: a part whose box is farther than the
        # nearest farthest-corner (or than an exact distance already known) cannot be the nearest
        # part, and is not computed (exact mesh distances are the cost of contact searches). The
        # mesh parts' trees are searched in one pass, each bounded by the best distance so far.
        # The minimum is the same, bit for bit.
        floors, ceilings, bodies = self._box_distances(points, others)
        reach = np.minimum(ceilings.min(axis=1), best)
        meshes, forest, diagonals = self._mesh_forest()
        for column, k in enumerate(others):
            if k in meshes:
                continue
            todo = floors[:, column] <= reach
            if todo.any():
                magnet = self.magnets[k]
                best[todo] = np.minimum(best[todo],
                                        shape_of(magnet).sdf(magnet, bodies[column][todo]))
        if meshes:
            columns = [others.index(k) for k in meshes]
            best = nearest_mesh_sdf(bodies[columns], diagonals, forest, best,
                                    floors[:, columns] <= reach[:, None], floors[:, columns])
        return best

    def _mesh_forest(self) -> tuple[list, object, list]:
        """The indices of the parts whose distance comes from a search tree (meshes), their
        trees packed into one meshtree.Forest (None without such parts) and their bounding-box
        diagonals (meshops.mesh_diagonal, m), built on first use."""
        if self._forest is None:
            trees = [(k, shape_of(m).search_tree(m)) for k, m in enumerate(self.magnets)]
            trees = [(k, tree) for k, tree in trees if tree is not None]
            diagonals = [mesh_diagonal(shape_of(self.magnets[k]).tessellation(self.magnets[k])[0])
                         for k, _ in trees]
            self._forest = ([k for k, _ in trees],
                            pack_trees([tree for _, tree in trees]) if trees else None, diagonals)
        return self._forest

    def _box_distances(self, points, chosen) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(N, len(chosen)) distances from each point to each chosen part's body-frame bounding
        box (0 inside it) and to the box's farthest corner, m; and (len(chosen), N, 3) the points
        in each chosen part's body frame."""
        if self._body_boxes is None:
            self._body_boxes = np.array([body_bounds(m) for m in self.magnets])  # (P, 2, 3)
        bodies = np.stack([to_body(points, self.magnets[k].position, self.magnets[k].rotation)
                           for k in chosen])
        low, high = self._body_boxes[chosen, :1], self._body_boxes[chosen, 1:]
        floors = np.linalg.norm(np.maximum(np.maximum(low - bodies, bodies - high), 0.0), axis=2)
        ceilings = np.linalg.norm(np.maximum(bodies - low, high - bodies), axis=2)
        return floors.T, ceilings.T, bodies


def _accumulate(H, G, result, gradient, where):
    if gradient:
        H[where] += result[0]
        G[where] += result[1]
    else:
        H[where] += result
