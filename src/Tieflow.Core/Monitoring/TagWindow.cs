namespace Tieflow.Core.Monitoring;

/// <summary>The readings of one tag that fall in one balance window (by their aligned time), in base units.</summary>
internal sealed class TagWindow
{
    public int Count { get; private set; }

    public double Sum { get; private set; }

    public double SumOfSquares { get; private set; }

    public double Mean => Count == 0 ? double.NaN : Sum / Count;

    public void Add(double value)
    {
        Count++;
        Sum += value;
        SumOfSquares += value * value;
    }
}
