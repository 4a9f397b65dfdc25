using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// The bridge between a unit as the plant file describes it (stages, named streams, tagged instruments in engineering
/// units) and the reconciliation network (string ids, any number of components): every stage a node, every stream of
/// the unit a network stream named by its record name, the components by their ids in role order. A cross-current unit
/// adds a solvent header that feeds every stage and an extract header that collects the extracts.
/// </summary>
public sealed class UnitModel
{
    /// <summary>Node id of the solvent header of a cross-current unit.</summary>
    public const string SolventHeader = "solvent-header";

    /// <summary>Node id of the extract header of a cross-current unit.</summary>
    public const string ExtractHeader = "extract-header";

    private readonly Dictionary<string, InstrumentBinding> _bindings;

    /// <summary>Builds the model of a unit.</summary>
    /// <param name="unit">The unit.</param>
    public UnitModel(UnitDescription unit)
    {
        ArgumentNullException.ThrowIfNull(unit);
        Unit = unit;
        int n = unit.Stages;
        ComponentIds = [.. unit.System.Components.Select(c => c.Id)];
        var streams = new List<(UnitStream Stream, NetworkStream Edge)>();
        string Stage(int k) => StageNode(k);
        var nodes = Enumerable.Range(1, n).Select(Stage).ToList();
        if (unit.Arrangement == CascadeArrangement.Countercurrent)
        {
            streams.Add((UnitStream.Feed, new NetworkStream("feed", null, Stage(1))));
            streams.Add((UnitStream.Solvent, new NetworkStream("solvent", null, Stage(n))));
            for (int k = 1; k <= n; k++)
            {
                UnitStream r = UnitStream.RaffinateOf(k), e = UnitStream.ExtractOf(k);
                streams.Add((r, new NetworkStream(unit.StreamName(r), Stage(k), k < n ? Stage(k + 1) : null)));
                streams.Add((e, new NetworkStream(unit.StreamName(e), Stage(k), k > 1 ? Stage(k - 1) : null)));
            }
        }
        else
        {
            nodes.Add(SolventHeader);
            nodes.Add(ExtractHeader);
            streams.Add((UnitStream.Feed, new NetworkStream("feed", null, Stage(1))));
            streams.Add((UnitStream.Solvent, new NetworkStream("solvent", null, SolventHeader)));
            for (int k = 1; k <= n; k++)
            {
                UnitStream r = UnitStream.RaffinateOf(k), e = UnitStream.ExtractOf(k);
                streams.Add((new UnitStream(StreamPhase.Solvent, k), new NetworkStream(SolventBranch(k), SolventHeader, Stage(k))));
                streams.Add((r, new NetworkStream(unit.StreamName(r), Stage(k), k < n ? Stage(k + 1) : null)));
                streams.Add((e, new NetworkStream(unit.StreamName(e), Stage(k), ExtractHeader)));
            }

            streams.Add((UnitStream.FinalExtract(CascadeArrangement.Crosscurrent), new NetworkStream("extract", ExtractHeader, null)));
        }

        Streams = [.. streams.Select(s => s.Stream)];
        Network = new ProcessNetwork(nodes, streams.Select(s => s.Edge), ComponentIds);
        _bindings = new Dictionary<string, InstrumentBinding>(StringComparer.Ordinal);
        foreach (Instrument i in unit.Instruments)
        {
            QuantityKey? key = i.Quantity switch
            {
                InstrumentQuantity.Flow => QuantityKey.FlowOf(unit.StreamName(i.Stream!.Value)),
                InstrumentQuantity.Fraction => QuantityKey.FractionOf(unit.StreamName(i.Stream!.Value), ComponentIds[(int)i.Component!.Value]),
                _ => null,
            };
            _bindings[i.Tag] = new InstrumentBinding(i, key);
        }
    }

    /// <summary>The unit described.</summary>
    public UnitDescription Unit { get; }

    /// <summary>Component ids in role order (solute, diluent, solvent).</summary>
    public IReadOnlyList<string> ComponentIds { get; }

    /// <summary>The unit's streams in network order (the same order as <see cref="ProcessNetwork.Streams"/>).</summary>
    public IReadOnlyList<UnitStream> Streams { get; }

    /// <summary>The reconciliation network.</summary>
    public ProcessNetwork Network { get; }

    /// <summary>Node id of a stage (<c>stage-3</c>).</summary>
    /// <param name="stage">1-based stage.</param>
    public static string StageNode(int stage) => $"stage-{stage}";

    /// <summary>Stream id of the solvent branch to a stage of a cross-current unit.</summary>
    /// <param name="stage">1-based stage.</param>
    public static string SolventBranch(int stage) => $"solvent-{stage}";

    /// <summary>What an instrument's readings measure in the network; null for a tag of another unit.</summary>
    /// <param name="tag">The tag.</param>
    public InstrumentBinding? Binding(string tag) => _bindings.TryGetValue(tag, out InstrumentBinding? b) ? b : null;

    /// <summary>Every instrument binding of the unit.</summary>
    public IEnumerable<InstrumentBinding> Bindings => _bindings.Values;

    /// <summary>The network stream id of a unit stream.</summary>
    /// <param name="stream">The stream.</param>
    public string StreamId(UnitStream stream) =>
        stream.Phase == StreamPhase.Solvent && stream.Stage > 0 ? SolventBranch(stream.Stage) : Unit.StreamName(stream);

    /// <summary>
    /// True for a stream that leaves a settler as one saturated phase (its composition lies on a branch of the binodal
    /// unless it carries droplets of the other phase): every raffinate and every extract leaving a stage.
    /// </summary>
    /// <param name="stream">The stream.</param>
    public static bool IsSaturatedPhase(UnitStream stream) => stream.Stage > 0 && stream.Phase is StreamPhase.Raffinate or StreamPhase.Extract;

    /// <summary>The role of a component id, or null.</summary>
    /// <param name="componentId">The id.</param>
    public ComponentRole? RoleOf(string componentId)
    {
        int i = Unit.System.IndexOf(componentId);
        return i < 0 ? null : (ComponentRole)i;
    }
}
