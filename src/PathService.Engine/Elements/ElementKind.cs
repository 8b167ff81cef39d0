using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Elements;

/// <summary>
/// One kind of element (bar, beam, ...): what the assembler needs to know to put its elements into the structure's
/// equations, and nothing about the others. A kind declares
/// <list type="bullet">
/// <item>its nodal unknowns: the element vectors hold <see cref="UnknownsPerEnd"/> entries per end (3: translations x, y, z;
/// 6: translations, then rotations about x, y, z), and <see cref="HoldsRotation"/> says whether an end needs its node's
/// rotations (the <see cref="DofMap"/> gives a node rotations iff some element end holds one);</item>
/// <item>how its element matrix and force vector are stored: per element <see cref="BlockSize"/> tangent numbers and
/// <see cref="ForceSize"/> force numbers, and the layouts that map each upper-triangle entry (r ≤ c) of the element
/// matrix and each entry of the element force vector to one of those numbers, possibly negated (a bar stores its 3×3
/// block k once for [k, −k; −k, k]);</item>
/// <item>the evaluation of a range of its elements at a configuration (<see cref="Tangents"/>, <see cref="Forces"/>),
/// writing only its own elements' numbers, so ranges can run on different threads;</item>
/// <item>what happens after a converged point (<see cref="Commit"/>: the material history) and its results.</item>
/// </list>
/// The configuration is the full vector of <see cref="Configuration"/>: translations, and rotation vectors at rotating
/// nodes. Tangents are with respect to the translations and the spatial spin increments.
/// </summary>
public abstract class ElementKind
{
    public abstract string Name { get; }
    public abstract int Count { get; }
    /// <summary>Unknowns per end in the element's vectors: 3 (translations) or 6 (translations, then rotations).</summary>
    public abstract int UnknownsPerEnd { get; }
    /// <summary>Number of ends (nodes) of each element.</summary>
    public virtual int Ends => 2;
    /// <summary>Node of an element end.</summary>
    public abstract int Node(int element, int end);
    /// <summary>Whether an element end needs its node's rotations.</summary>
    public abstract bool HoldsRotation(int element, int end);
    /// <summary>Tangent numbers stored per element.</summary>
    public abstract int BlockSize { get; }
    /// <summary>The upper triangle (R ≤ C, local indices) of the element matrix: the stored number each entry is and its sign.</summary>
    public abstract (int R, int C, int Entry, bool Negate)[] TangentLayout { get; }
    /// <summary>Force numbers stored per element.</summary>
    public abstract int ForceSize { get; }
    /// <summary>Each entry of the element force vector (local index): the stored number it is and its sign.</summary>
    public abstract (int Local, int Entry, bool Negate)[] ForceLayout { get; }

    /// <summary>Evaluates the tangent numbers of elements [from, to) into <paramref name="blocks"/> (this kind's numbers, BlockSize per element).</summary>
    public abstract void Tangents(int from, int to, ReadOnlySpan<double> configuration, TangentParts parts, ReadOnlySpan<double> stress, Span<double> blocks);

    /// <summary>Evaluates the force numbers of elements [from, to) into <paramref name="forces"/> (ForceSize per element).</summary>
    public abstract void Forces(int from, int to, ReadOnlySpan<double> configuration, Span<double> forces);

    /// <summary>Stores what a converged configuration leaves behind (material history); nothing for path-independent kinds.</summary>
    public virtual void Commit(ReadOnlySpan<double> configuration) { }

    /// <summary>Full DOF of a local index of an element, or -1 when its node has no such unknown (a rotation at a node
    /// without rotations: the end is fully released and its rows are zero).</summary>
    public int FullDof(DofMap map, int element, int local)
    {
        int end = local / UnknownsPerEnd, component = local % UnknownsPerEnd;
        int node = Node(element, end);
        return component < map.Size(node) ? map.Offset[node] + component : -1;
    }
}
