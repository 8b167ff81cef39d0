namespace PathService.Ifc.Step;

/// <summary>
/// A read-only view of a stream that refuses to deliver more than a given number of bytes, so an over-size upload is
/// refused after reading at most the limit (never buffered whole). A seekable stream longer than the limit is refused
/// before any byte is read.
/// </summary>
internal sealed class SizeLimitedStream : Stream
{
    private readonly Stream _inner;
    private readonly long _limit;
    private long _read;

    public SizeLimitedStream(Stream inner, long limit)
    {
        _inner = inner;
        _limit = limit;
        if (inner.CanSeek && inner.Length - inner.Position > limit) throw TooLarge();
    }

    private StepFormatException TooLarge() =>
        new("FILE_TOO_LARGE", $"the file exceeds the size limit of {_limit} bytes");

    public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

    public override int Read(Span<byte> buffer)
    {
        // Ask for one byte past the limit so that a file of exactly the limit is accepted and one byte more is not.
        long allowed = _limit + 1 - _read;
        if (allowed <= 0) throw TooLarge();
        int n = _inner.Read(buffer[..(int)Math.Min(buffer.Length, allowed)]);
        _read += n;
        if (_read > _limit) throw TooLarge();
        return n;
    }

    public override bool CanRead => true;
    public override bool CanSeek => false;
    public override bool CanWrite => false;
    public override long Length => throw new NotSupportedException();
    public override long Position { get => _read; set => throw new NotSupportedException(); }
    public override void Flush() { }
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
    public override void SetLength(long value) => throw new NotSupportedException();
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
}
