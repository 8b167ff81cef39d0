using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// A rigid placement: origin and the three unit axes in global coordinates. IfcAxis2Placement3D gives the local z
/// axis (Axis) and an approximate local x axis (RefDirection), which is made orthogonal to z by one Gram–Schmidt step
/// and y = z × x, as the IFC geometry resource defines its derived attribute P (ISO 16739-1:2018, IfcAxis2Placement3D
/// and the function IfcBuildAxes, from memory). IfcLocalPlacement composes with PlacementRelTo up to the world.
/// </summary>
internal readonly record struct Placement(Vec3 Origin, Vec3 X, Vec3 Y, Vec3 Z)
{
    public static readonly Placement World = new(Vec3.Zero, new(1, 0, 0), new(0, 1, 0), new(0, 0, 1));

    public Vec3 Apply(Vec3 local) => Origin + X * local.X + Y * local.Y + Z * local.Z;
    public Vec3 Rotate(Vec3 local) => X * local.X + Y * local.Y + Z * local.Z;

    public Placement Then(Placement parent) =>
        new(parent.Apply(Origin), parent.Rotate(X), parent.Rotate(Y), parent.Rotate(Z));

    /// <summary>Coordinates of a world point in this placement's axes (the inverse of <see cref="Apply"/>).</summary>
    public Vec3 ToLocal(Vec3 world)
    {
        var d = world - Origin;
        return new Vec3(d.Dot(X), d.Dot(Y), d.Dot(Z));
    }

    /// <summary>Components of a world vector in this placement's axes.</summary>
    public Vec3 RotateToLocal(Vec3 world) => new(world.Dot(X), world.Dot(Y), world.Dot(Z));

    /// <summary>Whether the axes of the two placements coincide (origins may differ).</summary>
    public bool SameAxes(Placement other, double tol = 1e-9) =>
        (X - other.X).Length < tol && (Y - other.Y).Length < tol && (Z - other.Z).Length < tol;
}

internal readonly record struct Vec3(double X, double Y, double Z)
{
    public static readonly Vec3 Zero = new(0, 0, 0);
    public static Vec3 operator +(Vec3 a, Vec3 b) => new(a.X + b.X, a.Y + b.Y, a.Z + b.Z);
    public static Vec3 operator -(Vec3 a, Vec3 b) => new(a.X - b.X, a.Y - b.Y, a.Z - b.Z);
    public static Vec3 operator *(Vec3 a, double s) => new(a.X * s, a.Y * s, a.Z * s);
    public double Dot(Vec3 b) => X * b.X + Y * b.Y + Z * b.Z;
    public Vec3 Cross(Vec3 b) => new(Y * b.Z - Z * b.Y, Z * b.X - X * b.Z, X * b.Y - Y * b.X);
    public double Length => Math.Sqrt(Dot(this));
    public Vec3 Unit => this * (1 / Length);
}

/// <summary>Evaluates IfcLocalPlacement chains and IfcAxis2Placement3D, with the file's length scale applied to origins.</summary>
internal sealed class PlacementResolver(EntityAccess access, double lengthScale)
{
    private readonly Dictionary<int, Placement> _cache = new();

    public Placement ObjectPlacement(StepEntity placement, int depth = 0)
    {
        if (_cache.TryGetValue(placement.Number, out var cached)) return cached;
        if (depth > 64)
            throw new StepFormatException("BAD_ATTRIBUTE", "IfcLocalPlacement.PlacementRelTo chain is cyclic or deeper than 64", placement.Number, 1, placement.Line);
        if (placement.Type != "IFCLOCALPLACEMENT")
            throw new StepFormatException("UNSUPPORTED_PLACEMENT", $"{placement.Type} is not supported as an object placement (only IfcLocalPlacement)", placement.Number, null, placement.Line);
        var parent = access.OptionalRef(placement, 1, "PlacementRelTo", "IFCLOCALPLACEMENT", "IFCGRIDPLACEMENT");
        var relative = access.Ref(placement, 2, "RelativePlacement", "IFCAXIS2PLACEMENT3D", "IFCAXIS2PLACEMENT2D");
        var local = Axis2(relative);
        var result = parent is null ? local : local.Then(ObjectPlacement(parent, depth + 1));
        _cache[placement.Number] = result;
        return result;
    }

    public Placement Axis2(StepEntity a)
    {
        var origin = Point(access.Ref(a, 1, "Location", "IFCCARTESIANPOINT"));
        if (a.Type == "IFCAXIS2PLACEMENT2D")
        {
            var rx = access.OptionalRef(a, 2, "RefDirection", "IFCDIRECTION") is { } d2 ? Direction(d2) : new Vec3(1, 0, 0);
            var x2 = new Vec3(rx.X, rx.Y, 0).Unit;
            return new Placement(origin, x2, new Vec3(-x2.Y, x2.X, 0), new Vec3(0, 0, 1));
        }
        var z = access.OptionalRef(a, 2, "Axis", "IFCDIRECTION") is { } dz ? Direction(dz) : new Vec3(0, 0, 1);
        var r = access.OptionalRef(a, 3, "RefDirection", "IFCDIRECTION") is { } dx ? Direction(dx)
            : Math.Abs(Math.Abs(z.X) - 1) > 1e-12 ? new Vec3(1, 0, 0) : new Vec3(0, 0, 1); // IfcFirstProjAxis default (from memory)
        var x = r - z * r.Dot(z);
        if (x.Length < 1e-9)
            throw EntityAccess.Error(a, 3, "RefDirection", "is parallel to Axis, so the local x axis is undefined");
        x = x.Unit;
        return new Placement(origin, x, z.Cross(x), z);
    }

    public Vec3 Point(StepEntity p)
    {
        if (p.Type != "IFCCARTESIANPOINT")
            throw new StepFormatException("UNSUPPORTED_POINT", $"{p.Type} is not supported as a point (only IfcCartesianPoint)", p.Number, null, p.Line);
        var c = access.Coordinates(p, 1, "Coordinates");
        return new Vec3(c[0], c[1], c[2]) * lengthScale;
    }

    public Vec3 Direction(StepEntity d)
    {
        var c = access.Coordinates(d, 1, "DirectionRatios");
        var v = new Vec3(c[0], c[1], c[2]);
        if (!(v.Length > 0)) throw EntityAccess.Error(d, 1, "DirectionRatios", "is the zero vector");
        return v.Unit;
    }
}
