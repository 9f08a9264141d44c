"""Classical boundary corrections of a closed-wall subsonic wind tunnel (three-dimensional model).

Scope
-----
Closed (solid) walls, subsonic flow below the onset of local supersonic flow,
and a model small compared with the test section (the classical small-model,
linearised image theory; a frontal blockage of a few per cent at most,
common practice, no source).  Open-jet and ventilated (slotted, perforated)
walls change the signs and sizes of every factor here: for them the caller
must supply the factors from their own source (for example a negative
boundary factor ``δ`` for an open jet); nothing in this module decides the
wall type.  Two-dimensional models (wings spanning the section) need the
two-dimensional forms of [1] ch. 9, not these.

The corrections are:

* solid blockage ``ε_sb = K V / C^{3/2}`` (Thom's short form [1], [4]);
* wake blockage ``ε_wb = (S / 4C) C_Du`` (attached flow, [1]) and Maskell's form
  for separated flow [1], [6];
* the compressible factors ``β^-3`` (solid) and ``(1 + 0.4 M^2) / β^2`` (wake),
  ``β = sqrt(1 - M^2)`` ([3], [5]);
* the first-order corrections of speed, dynamic pressure and Mach number from
  the total ``ε`` (derived below from the isentropic relations, [7]);
* Glauert's lift interference ``Δα = δ (S/C) C_L``, ``ΔC_Di = δ (S/C) C_L^2`` [1], [2].

Sign conventions
----------------
Every correction is *added* to the uncorrected (measured) value:
``U = U_u (1 + ε)``, ``α = α_u + Δα``, ``C_D = C_Du + ΔC_Di``.  Closed walls
give ``ε > 0`` (the model sees a faster stream than the empty-tunnel
calibration says) and ``δ > 0`` (the walls add upwash, so the true angle of
attack is larger than the geometric one and the induced drag measured is too
small).  ``ε`` is a fraction of the free-stream speed; angles are in radians.

Symbols: ``C`` test-section cross-sectional area [m^2], ``V`` model volume
[m^3], ``S`` model reference (wing) area [m^2], ``C_Du`` uncorrected drag
coefficient on ``S``, ``M`` uncorrected Mach number.

References
----------
.. [1] J. B. Barlow, W. H. Rae, A. Pope, *Low-Speed Wind Tunnel Testing*,
   3rd ed., Wiley, 1999, ch. 10 (three-dimensional boundary corrections:
   solid blockage, wake blockage, Maskell's separated-flow wake blockage,
   lift interference and the boundary factor δ).  Forms checked against
   recall of the text, not a copy at hand: "(from memory of [1])".
.. [2] H. Glauert, *Wind Tunnel Interference on Wings, Bodies and Airscrews*,
   ARC R&M 1566, 1933 (δ = 1/8 for a small wing in a closed circular section).
.. [3] H. C. Garner, E. W. E. Rogers, W. E. A. Acum, E. C. Maskell,
   *Subsonic Wind Tunnel Wall Corrections*, AGARDograph 109, 1966
   (compressibility factors of blockage).
.. [4] A. Thom, *Blockage Corrections in a Closed High-Speed Tunnel*,
   ARC R&M 2033, 1943; J. G. Herriot, *Blockage Corrections for
   Three-Dimensional-Flow Closed-Throat Wind Tunnels, with Consideration of the
   Effect of Compressibility*, NACA Report 995, 1950.
.. [5] A. Pope, K. L. Goin, *High-Speed Wind Tunnel Testing*, Wiley, 1965,
   subsonic wall corrections (ε_sb / β^3, ε_wb (1 + 0.4 M^2) / β^2,
   q = q_u (1 + (2 - M^2) ε), M = M_u (1 + (1 + 0.2 M^2) ε)).
.. [6] E. C. Maskell, *A Theory of the Blockage Effects on Bluff Bodies and
   Stalled Wings in a Closed Wind Tunnel*, ARC R&M 3400, 1963.
.. [7] Ames Research Staff, *Equations, Tables, and Charts for Compressible
   Flow*, NACA Report 1135, 1953, eqs. 43-45 (isentropic relations used in the
   derivation of the Mach and dynamic-pressure corrections).
"""

from __future__ import annotations

import numpy as np

#: Default shape factor K of :func:`solid_blockage`: Thom's value for a
#: three-dimensional wing (0.96 for a body of revolution), from memory of [1], ch. 10.
SHAPE_FACTOR = 0.90


def _beta(mach):
    """Prandtl-Glauert factor ``β = sqrt(1 - M^2)``; NaN for M outside [0, 1), where the
    corrections do not hold (a Monte Carlo trial there is then refused as not physical, as
    every trial with a non-finite output is; one such trial must not stop the others)."""
    m = np.asarray(mach, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where((m >= 0.0) & (m < 1.0), np.sqrt(np.abs(1.0 - m * m)), np.nan)


def solid_blockage(model_volume, test_section_area, shape_factor):
    """Solid-blockage factor ``ε_sb = K V / C^{3/2}`` [-] (incompressible).

    Thom's short form ([4], quoted in [1], ch. 10).  The shape factor ``K``
    lumps the body-shape factor and the tunnel-shape factor of the fuller
    method of Herriot [4] (``K1 τ1`` for a wing, ``K3 τ1`` for a body, read from
    the handbook's charts against thickness or fineness ratio, section shape
    and span ratio).  Thom's values are ``K = 0.90`` for a three-dimensional
    wing and ``K = 0.96`` for a body of revolution (from memory of [1], ch. 10).
    For a complete model sum the components: ``ε_sb = Σ K_i V_i / C^{3/2}``.

    Parameters
    ----------
    model_volume : array_like
        Model volume V [m^3].
    test_section_area : array_like
        Test-section cross-sectional area C [m^2].
    shape_factor : array_like
        Shape factor K [-] (product K τ of the fuller method).

    Examples
    --------
    A 0.01 m^3 wing (K = 0.90) in a 2 m^2 closed section:
    ``0.90 * 0.01 / 2^1.5 = 0.009 / 2.828427 = 0.0031820``.

    >>> round(float(solid_blockage(0.01, 2.0, 0.90)), 7)
    0.003182
    """
    return shape_factor * model_volume / np.asarray(test_section_area, dtype=float) ** 1.5


def wake_blockage(reference_area, test_section_area, drag_coefficient):
    """Wake-blockage factor ``ε_wb = (S / 4C) C_Du`` [-] (incompressible, attached flow).

    The wake is modelled by a source whose strength is proportional to the drag;
    its image system in closed walls speeds the stream at the model ([1], ch. 10,
    from memory of [1]; Thom [4]).

    Parameters
    ----------
    reference_area : array_like
        Reference area S on which C_Du is based [m^2].
    test_section_area : array_like
        Test-section cross-sectional area C [m^2].
    drag_coefficient : array_like
        Uncorrected drag coefficient C_Du [-].

    Examples
    --------
    S = 0.3 m^2, C = 2 m^2, C_Du = 0.05: ``0.3 / 8 * 0.05 = 0.001875``.

    >>> round(float(wake_blockage(0.3, 2.0, 0.05)), 9)
    0.001875
    """
    return reference_area / (4.0 * np.asarray(test_section_area, dtype=float)) * drag_coefficient


def maskell_wake_blockage(reference_area, test_section_area, drag_coefficient,
                          zero_lift_drag_coefficient, induced_drag_coefficient):
    """Wake blockage with separated flow (Maskell) [-] (incompressible).

    ``ε_wb = (S / 4C) C_D0 + (5 S / 4C) (C_Du - C_Di - C_D0)``

    The attached part of the wake (``C_D0``) is treated as in
    :func:`wake_blockage`; the drag of the separated wake
    ``C_Ds = C_Du - C_Di - C_D0`` carries Maskell's larger factor 5/4
    ([6]; form from memory of [1], ch. 10).  With no separation
    (``C_Du = C_D0 + C_Di``) it reduces to the attached-flow form on ``C_D0``.

    Parameters
    ----------
    reference_area : array_like
        Reference area S [m^2].
    test_section_area : array_like
        Test-section cross-sectional area C [m^2].
    drag_coefficient : array_like
        Uncorrected drag coefficient C_Du [-].
    zero_lift_drag_coefficient : array_like
        Drag coefficient at zero lift C_D0 [-].
    induced_drag_coefficient : array_like
        Induced drag coefficient C_Di [-] (e.g. ``C_L^2 / (π e A)``).

    Examples
    --------
    S = 0.3 m^2, C = 2 m^2, C_D0 = 0.02, C_Di = 0.03, C_Du = 0.10
    (so C_Ds = 0.05): ``0.0375 * 0.02 + 0.1875 * 0.05 = 0.00075 + 0.009375``.

    >>> round(float(maskell_wake_blockage(0.3, 2.0, 0.10, 0.02, 0.03)), 9)
    0.010125
    """
    ratio = reference_area / (4.0 * np.asarray(test_section_area, dtype=float))
    separated = drag_coefficient - induced_drag_coefficient - zero_lift_drag_coefficient
    return ratio * zero_lift_drag_coefficient + 5.0 * ratio * separated


def compressible_blockage(eps_solid, eps_wake, mach, parts=False):
    """Total blockage factor at Mach number M [-] from the incompressible factors.

    ``ε = ε_sb / β^3 + ε_wb (1 + 0.4 M^2) / β^2``, ``β = sqrt(1 - M^2)``

    The solid-blockage factor grows as ``β^-3`` (Göthert's rule applied to the
    image doublets of a three-dimensional body) and the wake-blockage factor as
    ``(1 + (γ - 1) M^2) / β^2`` with ``γ - 1 = 0.4`` for air ([3], [4], [5];
    from memory of [5]).  ``M = 0`` returns ``ε_sb + ε_wb``.

    Parameters
    ----------
    eps_solid : array_like
        Incompressible solid-blockage factor ε_sb [-] (:func:`solid_blockage`).
    eps_wake : array_like
        Incompressible wake-blockage factor ε_wb [-] (:func:`wake_blockage`).
    mach : array_like
        Uncorrected Mach number M [-], 0 <= M < 1.
    parts : bool
        If true, return the two compressible parts ``(ε_sb / β^3,
        ε_wb (1 + 0.4 M^2) / β^2)`` instead of their sum.

    A Mach number outside [0, 1) gives NaN (not physical).

    Examples
    --------
    M = 0.5: β^2 = 0.75, β^3 = 0.649519; ε_sb = 0.003, ε_wb = 0.002:
    ``0.003 / 0.649519 + 0.002 * 1.1 / 0.75 = 0.0046188 + 0.0029333``.

    >>> round(float(compressible_blockage(0.003, 0.002, 0.5)), 7)
    0.0075521
    >>> [round(float(e), 7) for e in compressible_blockage(0.003, 0.002, 0.5, parts=True)]
    [0.0046188, 0.0029333]
    """
    beta = _beta(mach)
    m2 = np.asarray(mach, dtype=float) ** 2
    solid = eps_solid / beta**3
    wake = eps_wake * (1.0 + 0.4 * m2) / beta**2
    if parts:
        return solid, wake
    return solid + wake


def corrected_speed(u, eps):
    """Free-stream speed at the model ``U = U_u (1 + ε)`` [m s^-1] ([1], ch. 10).

    Parameters
    ----------
    u : array_like
        Uncorrected (empty-tunnel calibration) speed U_u [m s^-1].
    eps : array_like
        Total blockage factor ε [-].

    Examples
    --------
    >>> round(float(corrected_speed(40.0, 0.01)), 9)
    40.4
    """
    return u * (1.0 + eps)


def corrected_dynamic_pressure(q, eps, mach=0.0):
    """Dynamic pressure at the model ``q = q_u (1 + (2 - M^2) ε)`` [Pa] (first order in ε).

    Derivation ([5]; isentropic relations [7]): at constant stagnation state a
    speed increment ``dU/U = ε`` gives ``dp/p = -γ M^2 ε`` and
    ``dM/M = (1 + (γ - 1)/2 M^2) ε``; with ``q = γ p M^2 / 2``,
    ``dq/q = dp/p + 2 dM/M = (2 - M^2) ε`` for any γ.  ``M = 0`` gives the
    incompressible ``q_u (1 + 2ε)``, the first order of ``(1 + ε)^2``.

    Parameters
    ----------
    q : array_like
        Uncorrected dynamic pressure q_u [Pa].
    eps : array_like
        Total blockage factor ε [-] (:func:`compressible_blockage`).
    mach : array_like
        Uncorrected Mach number M [-], 0 <= M < 1 (0: incompressible).

    Examples
    --------
    q_u = 1000 Pa, ε = 0.01, M = 0.5: ``1000 (1 + 1.75 * 0.01) = 1017.5``.

    >>> round(float(corrected_dynamic_pressure(1000.0, 0.01, 0.5)), 9)
    1017.5
    >>> round(float(corrected_dynamic_pressure(1000.0, 0.01)), 9)
    1020.0
    """
    m2 = np.asarray(mach, dtype=float) ** 2
    return q * (1.0 + (2.0 - m2) * eps) + 0.0 * _beta(mach)  # NaN beyond subsonic


def corrected_mach(mach, eps, gamma=1.4):
    """Mach number at the model ``M = M_u (1 + (1 + (γ-1)/2 M^2) ε)`` [-] (first order in ε).

    With γ = 1.4 this is ``M_u (1 + (1 + 0.2 M^2) ε)`` ([5]).  Derivation: at
    constant stagnation temperature ``T = T0 / (1 + (γ-1)/2 M^2)`` ([7], eq. 43)
    and ``M = U / sqrt(γ R T)``, so ``dM/M = (1 + (γ-1)/2 M^2) dU/U``.

    Parameters
    ----------
    mach : array_like
        Uncorrected Mach number M_u [-], 0 <= M < 1.
    eps : array_like
        Total blockage factor ε [-].
    gamma : float
        Ratio of specific heats [-].

    Examples
    --------
    M_u = 0.5, ε = 0.01: ``0.5 (1 + 1.05 * 0.01) = 0.50525``.

    >>> round(float(corrected_mach(0.5, 0.01)), 9)
    0.50525
    """
    m = np.asarray(mach, dtype=float)
    return m * (1.0 + (1.0 + 0.5 * (gamma - 1.0) * m * m) * eps) + 0.0 * _beta(mach)


def lift_interference(boundary_factor, reference_area, test_section_area, lift_coefficient):
    """Glauert's lift interference ``(Δα, ΔC_Di)``: ``Δα = δ (S/C) C_L`` [rad], ``ΔC_Di = δ (S/C) C_L^2`` [-].

    The walls' image trailing vortices induce a uniform upwash at a small wing;
    the angle of attack and the induced drag are corrected by adding
    ``Δα`` and ``ΔC_Di = Δα C_L`` ([1], ch. 10; [2]).  The caller passes the
    boundary factor δ:

    * closed circular section, vanishing span, uniform loading: ``δ = 1/8 = 0.125``
      ([2]; derivation in ``tests/test_walls.py``);
    * closed rectangular (and elliptic, octagonal) sections: read δ from the
      handbook's charts against the span ratio (effective vortex span over
      section width) and the section's height-to-width ratio ([1], ch. 10);
    * open jets: δ is negative; ventilated walls: the caller's own source.

    Streamline-curvature and tail-downwash corrections are not included.

    Parameters
    ----------
    boundary_factor : array_like
        Boundary correction factor δ [-].
    reference_area : array_like
        Wing reference area S [m^2].
    test_section_area : array_like
        Test-section cross-sectional area C [m^2].
    lift_coefficient : array_like
        Lift coefficient C_L [-] (wing lift for the upwash; [1] uses the wing's C_L).

    Returns
    -------
    delta_alpha : ndarray
        Angle-of-attack correction Δα [rad], added to the geometric angle.
    delta_drag : ndarray
        Induced-drag correction ΔC_Di [-], added to the measured drag coefficient.

    Examples
    --------
    δ = 0.125, S/C = 0.3/2 = 0.15, C_L = 0.8: Δα = 0.015 rad (0.859 deg),
    ΔC_Di = 0.015 * 0.8 = 0.012.

    >>> da, dcd = lift_interference(0.125, 0.3, 2.0, 0.8)
    >>> round(float(da), 9), round(float(dcd), 9)
    (0.015, 0.012)
    """
    s_over_c = reference_area / np.asarray(test_section_area, dtype=float)
    delta_alpha = boundary_factor * s_over_c * lift_coefficient
    return delta_alpha, delta_alpha * lift_coefficient
