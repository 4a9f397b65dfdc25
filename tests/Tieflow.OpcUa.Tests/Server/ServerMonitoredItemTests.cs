using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Server;

namespace Tieflow.OpcUa.Tests.Server;

/// <summary>
/// Sampling, DataChangeFilter and queue rules of a monitored item, checked against OPC 10000-4 §5.12.1 (queue and
/// overflow bit, §5.12.1.5) and §7.22.2 (DataChangeFilter; a status change is always reported).
/// </summary>
public sealed class ServerMonitoredItemTests
{
    private static readonly DateTime T0 = new(2026, 3, 2, 8, 0, 0, DateTimeKind.Utc);

    [Theory]
    [InlineData(0.25, new[] { 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0 }, new[] { 0.0, 0.3, 0.6, 0.9 })]
    [InlineData(0.0, new[] { 0.1, 0.1, 0.2 }, new[] { 0.0, 0.1, 0.2 })]
    public void OnValueChanged_AbsoluteDeadband_ReportsOnlyChangesBeyondIt(double deadband, double[] values, double[] expected)
    {
        var item = Item(new DataChangeSettings(1, 1, deadband, deadband), queueSize: 100);
        item.SampleNow(Value(0.0), T0);
        for (var i = 0; i < values.Length; i++)
        {
            item.OnValueChanged(Value(values[i]), T0.AddSeconds(i + 1));
        }

        var reported = Drain(item).Select(v => (double)v.Value.Value!).ToArray();

        Assert.Equal(expected.Length, reported.Length);
        for (var i = 0; i < expected.Length; i++)
        {
            Assert.Equal(expected[i], reported[i], 1e-12);
        }
    }

    [Fact]
    public void OnValueChanged_StatusChangeWithinDeadband_IsReported()
    {
        var item = Item(new DataChangeSettings(1, 1, 10, 10), queueSize: 10);
        item.SampleNow(Value(1.0), T0);

        item.OnValueChanged(Value(1.5, StatusCodes.UncertainLastUsableValue), T0.AddSeconds(1));
        item.OnValueChanged(Value(2.0, StatusCodes.BadSensorFailure), T0.AddSeconds(2));
        item.OnValueChanged(Value(2.5), T0.AddSeconds(3));
        item.OnValueChanged(Value(2.6), T0.AddSeconds(4));

        var statuses = Drain(item).Select(v => v.Status).ToArray();
        Assert.Equal([StatusCodes.Good, StatusCodes.UncertainLastUsableValue, StatusCodes.BadSensorFailure, StatusCodes.Good], statuses);
    }

    [Fact]
    public void OnValueChanged_FasterThanSamplingInterval_KeepsLatestUntilIntervalPasses()
    {
        var item = Item(null, queueSize: 10, samplingMs: 1000);
        item.SampleNow(Value(0), T0);

        item.OnValueChanged(Value(1), T0.AddMilliseconds(200));
        item.OnValueChanged(Value(2), T0.AddMilliseconds(400));
        item.FlushPending(T0.AddMilliseconds(900));
        Assert.Equal(1, item.QueuedCount);
        item.FlushPending(T0.AddMilliseconds(1000));

        var values = Drain(item).Select(v => (double)v.Value.Value!).ToArray();
        Assert.Equal([0.0, 2.0], values);
    }

    [Fact]
    public void Enqueue_FullQueueDiscardOldest_DropsOldestAndFlagsNextOldest()
    {
        var item = Item(null, queueSize: 3);
        item.SampleNow(Value(0), T0);
        for (var i = 1; i <= 3; i++)
        {
            item.OnValueChanged(Value(i), T0.AddSeconds(i));
        }

        var drained = Drain(item);

        Assert.Equal([1.0, 2.0, 3.0], drained.Select(v => (double)v.Value.Value!));
        // InfoType DataValue (0x400) plus Overflow (0x80) on the oldest value left (OPC 10000-4 §5.12.1.5, §7.39).
        Assert.Equal(0x480u, drained[0].Status.Code);
        Assert.Equal(0u, drained[1].Status.Code);
    }

    [Fact]
    public void Enqueue_FullQueueDiscardNewest_ReplacesLastAndFlagsIt()
    {
        var item = Item(null, queueSize: 2, discardOldest: false);
        item.SampleNow(Value(0), T0);
        item.OnValueChanged(Value(1), T0.AddSeconds(1));
        item.OnValueChanged(Value(2), T0.AddSeconds(2));

        var drained = Drain(item);

        Assert.Equal([0.0, 2.0], drained.Select(v => (double)v.Value.Value!));
        Assert.Equal(0x480u, drained[1].Status.Code);
    }

    [Fact]
    public void Enqueue_QueueSizeOne_KeepsLatestWithoutOverflowBit()
    {
        var item = Item(null, queueSize: 1);
        item.SampleNow(Value(0), T0);
        item.OnValueChanged(Value(5), T0.AddSeconds(1));

        var only = Assert.Single(Drain(item));

        Assert.Equal(5.0, (double)only.Value.Value!, 12);
        Assert.Equal(StatusCodes.Good, only.Status);
    }

    [Theory]
    [InlineData(0, true, false)]
    [InlineData(1, false, true)]
    [InlineData(2, true, true)]
    [InlineData(3, false, false)]
    public void SampleNow_TimestampsToReturn_KeepsTheRequestedOnes(int timestamps, bool source, bool server)
    {
        var item = new ServerMonitoredItem(1, Variable(), 13, new MonitoredItemSettings(7, 0, 1, true, timestamps, null));
        var measured = T0.AddMinutes(-5);

        item.SampleNow(Value(1, StatusCodes.Good, measured), T0);

        var value = Assert.Single(Drain(item));
        Assert.Equal(source ? measured : DateTime.MinValue, value.SourceTimestamp);
        Assert.Equal(server ? T0 : DateTime.MinValue, value.ServerTimestamp);
    }

    private static ServerMonitoredItem Item(DataChangeSettings? filter, uint queueSize, double samplingMs = 0, bool discardOldest = true) =>
        new(1, Variable(), 13, new MonitoredItemSettings(7, samplingMs, queueSize, discardOldest, 2, filter));

    private static ServerVariable Variable() =>
        new(new NodeId("X", 2), new QualifiedName("X", 2), new LocalizedText("X"), new NodeId(11u), new DataValue());

    private static DataValue Value(double v, StatusCode? status = null, DateTime? source = null) =>
        new() { Value = new Variant(BuiltInType.Double, v), Status = status ?? StatusCodes.Good, SourceTimestamp = source ?? T0 };

    private static List<DataValue> Drain(ServerMonitoredItem item)
    {
        var list = new List<(uint, DataValue)>();
        item.Drain(list, int.MaxValue);
        Assert.All(list, e => Assert.Equal(7u, e.Item1));
        return [.. list.Select(e => e.Item2)];
    }
}
