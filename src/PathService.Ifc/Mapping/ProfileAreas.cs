using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Cross-section areas of the parametric profiles of ISO 16739-1:2018 (IfcProfileResource), from their dimensions in
/// the file's length unit (the caller scales by length²). Fillet and edge radii are ignored (the sharp-cornered
/// section; the difference is a few tenths of a percent of a rolled section's area) and reported:
/// <list type="bullet">
/// <item>IfcCircleHollowProfileDef (Radius r, WallThickness t): A = π(r² − (r − t)²);</item>
/// <item>IfcRectangleHollowProfileDef (XDim b, YDim h, WallThickness t): A = b·h − (b − 2t)(h − 2t);</item>
/// <item>IfcIShapeProfileDef (OverallWidth b, OverallDepth d, WebThickness tw, FlangeThickness tf): A = 2·b·tf + (d − 2tf)·tw;</item>
/// <item>IfcCircleProfileDef and IfcRectangleProfileDef: the solid π r² and b·h.</item>
/// </list>
/// Attribute numbers: 1 ProfileType, 2 ProfileName, 3 Position, then the dimensions in the order above.
/// </summary>
internal static class ProfileAreas
{
    public static double? Area(EntityAccess a, StepEntity p, out bool radiiIgnored)
    {
        radiiIgnored = false;
        switch (p.Type)
        {
            case "IFCCIRCLEHOLLOWPROFILEDEF":
            {
                double r = a.PositiveNumber(p, 4, "Radius"), t = a.PositiveNumber(p, 5, "WallThickness");
                if (t >= r) throw EntityAccess.Error(p, 5, "WallThickness", $"({t}) must be less than Radius ({r})");
                return CircleHollow(r, t);
            }
            case "IFCCIRCLEPROFILEDEF":
            {
                double r = a.PositiveNumber(p, 4, "Radius");
                return Math.PI * r * r;
            }
            case "IFCRECTANGLEHOLLOWPROFILEDEF":
            {
                double b = a.PositiveNumber(p, 4, "XDim"), h = a.PositiveNumber(p, 5, "YDim"), t = a.PositiveNumber(p, 6, "WallThickness");
                if (2 * t >= Math.Min(b, h)) throw EntityAccess.Error(p, 6, "WallThickness", $"({t}) must be less than half of XDim and YDim");
                radiiIgnored = a.IsSet(p, 7) || a.IsSet(p, 8);
                return RectangleHollow(b, h, t);
            }
            case "IFCRECTANGLEPROFILEDEF":
                return a.PositiveNumber(p, 4, "XDim") * a.PositiveNumber(p, 5, "YDim");
            case "IFCISHAPEPROFILEDEF":
            {
                double b = a.PositiveNumber(p, 4, "OverallWidth"), d = a.PositiveNumber(p, 5, "OverallDepth");
                double tw = a.PositiveNumber(p, 6, "WebThickness"), tf = a.PositiveNumber(p, 7, "FlangeThickness");
                if (2 * tf >= d) throw EntityAccess.Error(p, 7, "FlangeThickness", $"({tf}) must be less than half of OverallDepth ({d})");
                if (tw >= b) throw EntityAccess.Error(p, 6, "WebThickness", $"({tw}) must be less than OverallWidth ({b})");
                radiiIgnored = a.IsSet(p, 8) || (p.Attributes.Count >= 9 && a.IsSet(p, 9));
                return IShape(b, d, tw, tf);
            }
            default:
                return null;
        }
    }

    public static double CircleHollow(double r, double t) => Math.PI * (r * r - (r - t) * (r - t));
    public static double RectangleHollow(double b, double h, double t) => b * h - (b - 2 * t) * (h - 2 * t);
    public static double IShape(double b, double d, double tw, double tf) => 2 * b * tf + (d - 2 * tf) * tw;
}
