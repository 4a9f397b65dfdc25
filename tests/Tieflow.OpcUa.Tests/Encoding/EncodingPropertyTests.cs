using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Encoding;

/// <summary>Invariants of the encoding and the chunking, checked on generated inputs (FsCheck, fixed replay seed for determinism).</summary>
public sealed class EncodingPropertyTests
{
    [Property(Replay = "(12345,67891)", MaxTest = 300)]
    public bool NodeIdText_NumericAndString_RoundTrips(ushort ns, uint id, NonNull<string> s)
    {
        var numeric = new NodeId(id, ns);
        var text = new NodeId(s.Get, ns);
        return NodeId.Parse(numeric.ToString()) == numeric && NodeId.Parse(text.ToString()) == text;
    }

    [Property(Replay = "(12345,67893)", MaxTest = 300)]
    public bool Variant_DoubleAndStringArrays_RoundTripBitForBit(double[] doubles, NonNull<string>[] strings)
    {
        var writer = new UaBinaryWriter();
        writer.WriteVariant(Variant.From(doubles));
        writer.WriteVariant(Variant.From(strings.Select(x => x.Get).ToArray()));
        var reader = new UaBinaryReader(writer.ToArray());
        var d = (double[])reader.ReadVariant().Value!;
        var t = (string[])reader.ReadVariant().Value!;
        return reader.Remaining == 0
            && d.Select(BitConverter.DoubleToInt64Bits).SequenceEqual(doubles.Select(BitConverter.DoubleToInt64Bits))
            && t.SequenceEqual(strings.Select(x => x.Get));
    }

    [Property(Replay = "(12345,67895)", MaxTest = 100)]
    public Property Chunks_AnyBodyAndBuffer_FitTheBufferAndReassemble()
    {
        var gen = from length in Gen.Choose(0, 70000)
                  from buffer in Gen.Choose(8192, 20000)
                  select (length, buffer);
        return Prop.ForAll(gen.ToArbitrary(), t =>
        {
            var body = new byte[t.length];
            new Random(t.length).NextBytes(body);
            var sender = new SecureChannelCodec(TransportLimits.Default) { PeerReceiveBufferSize = t.buffer };
            var receiver = new SecureChannelCodec(TransportLimits.Default);
            ReceivedMessage? message = null;
            foreach (var chunk in sender.EncodeChunks(TcpMessageType.Message, 1, body, StatusCodes.BadRequestTooLarge))
            {
                if (chunk.Length > t.buffer)
                {
                    return false;
                }

                var (type, c, size) = TcpFrameReader.ParseHeader(chunk, t.buffer);
                message = receiver.AddChunk(new TcpFrame(type, c, chunk, size));
            }

            return message is not null && message.Body.AsSpan().SequenceEqual(body);
        });
    }
}
