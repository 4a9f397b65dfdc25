using Tieflow.Core.Cascade;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class UnitModelTests
{
    [Fact]
    public void Countercurrent_EveryStageIsANodeWithThreeStreamsInAndOut()
    {
        var model = new UnitModel(DemoUnits.Train(4));

        Assert.Equal(["stage-1", "stage-2", "stage-3", "stage-4"], model.Network.Nodes);
        Assert.Equal(10, model.Network.Streams.Count);
        Assert.Equal(["acetone", "water", "trichloroethane"], model.Network.Components);
        foreach (string node in model.Network.Nodes)
        {
            Assert.Equal(2, model.Network.Streams.Count(s => s.To == node));
            Assert.Equal(2, model.Network.Streams.Count(s => s.From == node));
        }

        NetworkStream r2 = model.Network.Streams.Single(s => s.Id == "raffinate-2");
        Assert.Equal(("stage-2", "stage-3"), (r2.From, r2.To));
        NetworkStream e2 = model.Network.Streams.Single(s => s.Id == "extract-2");
        Assert.Equal(("stage-2", "stage-1"), (e2.From, e2.To));
        Assert.Null(model.Network.Streams.Single(s => s.Id == "raffinate").To);
        Assert.Null(model.Network.Streams.Single(s => s.Id == "extract").To);
    }

    [Fact]
    public void Crosscurrent_HeadersSplitTheSolventAndCollectTheExtracts()
    {
        var model = new UnitModel(DemoUnits.Train(3, CascadeArrangement.Crosscurrent));

        Assert.Contains(UnitModel.SolventHeader, model.Network.Nodes);
        Assert.Equal(3, model.Network.Streams.Count(s => s.From == UnitModel.SolventHeader));
        Assert.Equal(3, model.Network.Streams.Count(s => s.To == UnitModel.ExtractHeader));
        Assert.Equal("extract", model.Network.Streams.Single(s => s.From == UnitModel.ExtractHeader).Id);
    }

    [Fact]
    public void Bindings_MapTagsToNetworkQuantities()
    {
        var model = new UnitModel(DemoUnits.Train(4));

        Assert.Equal(QuantityKey.FlowOf("feed"), model.Binding("FI-301")!.Key);
        Assert.Equal(QuantityKey.FlowOf("raffinate"), model.Binding("FI-305")!.Key);
        Assert.Equal(QuantityKey.FractionOf("raffinate-2", "acetone"), model.Binding("AI-312")!.Key);
        Assert.Equal(QuantityKey.FractionOf("raffinate", "acetone"), model.Binding("AI-314")!.Key);
        Assert.Equal(QuantityKey.FractionOf("extract", "acetone"), model.Binding("AI-316")!.Key);
        Assert.Null(model.Binding("TI-302")!.Key);
        Assert.Null(model.Binding("nope"));
        Assert.All(model.Bindings.Where(b => b.Key is not null), b => Assert.True(model.Network.IndexOf(b.Key!.Value) >= 0));
    }

    [Theory]
    [InlineData(StreamPhase.Raffinate, 2, true)]
    [InlineData(StreamPhase.Extract, 1, true)]
    [InlineData(StreamPhase.Feed, 0, false)]
    [InlineData(StreamPhase.Solvent, 0, false)]
    [InlineData(StreamPhase.Extract, 0, false)]
    public void IsSaturatedPhase_OnlyStreamsLeavingASettler(StreamPhase phase, int stage, bool expected) =>
        Assert.Equal(expected, UnitModel.IsSaturatedPhase(new UnitStream(phase, stage)));
}
