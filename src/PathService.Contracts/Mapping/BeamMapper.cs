using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Beam messages ↔ engine beam definitions. Literal, as <see cref="ModelMapper"/>: unset fields take the documented
/// defaults (rigid ends, one element, a straight member bowed towards local y), every range is left to the engine's
/// validator, and an enum number outside the contract is passed on so that the finding quotes it.
/// </summary>
public static class BeamMapper
{
    public static BeamDefinition ToDefinition(Proto.Beam b) =>
        new(b.Id, b.StartNode, b.EndNode, b.ElasticModulus, b.ShearModulus, b.Area, b.SecondMomentY, b.SecondMomentZ, b.TorsionConstant,
            b.Orientation is { } v ? (v.X, v.Y, v.Z) : (0, 0, 0)) // unset: reported as a zero orientation vector at beams[i].orientation
        {
            StartReleases = ToReleases(b.StartReleases),
            EndReleases = ToReleases(b.EndReleases),
            Subdivisions = b.HasSubdivisions ? b.Subdivisions : 1,
            BowAmplitude = b.BowAmplitude,
            BowPlane = b.BowPlane switch
            {
                Proto.BowPlane.Unspecified or Proto.BowPlane.LocalY => BowPlane.LocalY,
                Proto.BowPlane.LocalZ => BowPlane.LocalZ,
                _ => (BowPlane)(int)b.BowPlane, // the number sent (never 0..2): reported by the validator as UNKNOWN_OPTION
            },
        };

    /// <summary>The message of an engine definition; defaults are written out (subdivisions set, bow plane stated).</summary>
    public static Proto.Beam ToMessage(BeamDefinition d) => new()
    {
        Id = d.Id, StartNode = d.StartNode, EndNode = d.EndNode,
        ElasticModulus = d.ElasticModulus, ShearModulus = d.ShearModulus, Area = d.Area,
        SecondMomentY = d.SecondMomentY, SecondMomentZ = d.SecondMomentZ, TorsionConstant = d.TorsionConstant,
        Orientation = new Proto.OrientationVector { X = d.Orientation.X, Y = d.Orientation.Y, Z = d.Orientation.Z },
        StartReleases = ToMessage(d.StartReleases),
        EndReleases = ToMessage(d.EndReleases),
        Subdivisions = d.Subdivisions,
        BowAmplitude = d.BowAmplitude,
        BowPlane = d.BowPlane switch
        {
            BowPlane.LocalY => Proto.BowPlane.LocalY,
            BowPlane.LocalZ => Proto.BowPlane.LocalZ,
            _ => (Proto.BowPlane)(int)d.BowPlane,
        },
    };

    private static BeamEndReleases ToReleases(Proto.BeamEndReleases? r) =>
        r is null ? BeamEndReleases.Rigid : new BeamEndReleases(r.Torsion, r.BendingY, r.BendingZ);

    private static Proto.BeamEndReleases ToMessage(BeamEndReleases? r) =>
        new() { Torsion = r?.Torsion ?? false, BendingY = r?.BendingY ?? false, BendingZ = r?.BendingZ ?? false };
}
